"""Make the demo coast and its wave record. EVERYTHING HERE IS INVENTED.

The coast of "Brannock Bay" between "Quillon Head" and the "Seffery Strand" does not exist: it
is drawn by the formulas below and placed in the open South Pacific near 33.5 S, 128 W, about a
thousand kilometres from any land, so nobody can mistake it for a real site. The wave record is
a seeded random series with a plausible shape (mostly small swell from the south-west, a few
storms, some short wind sea from the south-east); it is not a hindcast of anything.

Run ``python demo_coast/make_demo.py`` to rebuild ``coast.geojson`` and ``waves.csv``; the
output is the same every time (fixed seed).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
from pyproj import Transformer

HERE = Path(__file__).resolve().parent
CENTRE_LON, CENTRE_LAT = -128.0, -33.5
SEED = 20311


def coast_xy() -> tuple[np.ndarray, np.ndarray]:
    """The invented shoreline in local metres (x east, y north); the sea is to the south-west.

    The coast trends toward 120 degrees (east-south-east), so its seaward normal points to
    about 210 degrees, a few degrees east of the dominant swell. From north-west to south-east:
    a western beach, a low sandy headland (Quillon Head, a cuspate foreland: a bump of 70 m
    amplitude), a bay (Brannock Bay: a dip of 130 m amplitude) and a long straight beach
    (Seffery Strand). The bumps overlap, so the shape as measured differs from the amplitudes
    (``measure_demo.py``). Digitised north-west to south-east, so the sea is on the right.
    """
    s = np.arange(0.0, 17000.0 + 1.0, 20.0)  # along the trend
    n = 70.0 * np.exp(-(((s - 4000.0) / 1800.0) ** 2))  # Quillon Head (seaward)
    n -= 130.0 * np.exp(-(((s - 8000.0) / 2200.0) ** 2))  # Brannock Bay (landward)
    n += 5.0 * np.sin(s / 900.0)  # gentle irregularity
    trend = np.radians(120.0)
    seaward = np.radians(210.0)
    x = s * np.sin(trend) + n * np.sin(seaward)
    y = s * np.cos(trend) + n * np.cos(seaward)
    return x - x.mean(), y - y.mean()


def to_lonlat(x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Local metres to WGS 84 lon/lat through a transverse Mercator centred on the demo."""
    local = f"+proj=tmerc +lat_0={CENTRE_LAT} +lon_0={CENTRE_LON} +k=1 +ellps=WGS84 +units=m"
    tr = Transformer.from_crs(local, "EPSG:4326", always_xy=True)
    return tr.transform(x, y)


def write_coast(path: Path) -> None:
    """Write the invented coast as a GeoJSON LineString in WGS 84 (RFC 7946)."""
    lon, lat = to_lonlat(*coast_xy())
    feature = {
        "type": "Feature",
        "properties": {"name": "Brannock Bay coast (INVENTED demo coast, not a real place)"},
        "geometry": {
            "type": "LineString",
            "coordinates": [[round(a, 7), round(b, 7)] for a, b in zip(lon, lat, strict=True)],
        },
    }
    data = {
        "type": "FeatureCollection",
        "name": "demo_coast",
        "note": "Invented for the demo of the shoreline tool; no real coast is here.",
        "features": [feature],
    }
    path.write_text(json.dumps(data) + "\n", encoding="utf-8")


def write_structures(path: Path) -> None:
    """One invented jetty on the Seffery Strand, 250 m seaward of the shore (GeoJSON, WGS 84)."""
    x, y = coast_xy()
    i = int(np.argmin(np.abs(np.arange(x.size) * 20.0 - 12500.0)))  # 12.5 km along the trend
    seaward = np.radians(210.0)
    xs = x[i] + np.array([-100.0, 250.0]) * np.sin(seaward)
    ys = y[i] + np.array([-100.0, 250.0]) * np.cos(seaward)
    lon, lat = to_lonlat(xs, ys)
    feature = {
        "type": "Feature",
        "properties": {"name": "Seffery jetty (INVENTED)", "bypass": 0.2},
        "geometry": {
            "type": "LineString",
            "coordinates": [[round(a, 7), round(b, 7)] for a, b in zip(lon, lat, strict=True)],
        },
    }
    path.write_text(
        json.dumps({"type": "FeatureCollection", "features": [feature]}) + "\n", encoding="utf-8"
    )


def wave_record(hours: int = 8760, seed: int = SEED) -> dict[str, np.ndarray]:
    """An invented hourly offshore record for the year 2031 (seeded, reproducible).

    Swell from the south-west with a slow random wander, lognormal heights around 0.65 m with a
    seasonal swing, ten storms of 2.5-4.5 m from 205-240 degrees, and short wind sea from the
    south-east about a fifth of the time.
    """
    rng = np.random.default_rng(seed)
    t = np.arange(hours)
    season = 1.0 + 0.25 * np.cos(2 * np.pi * (t / hours - 0.55))
    # slowly varying (AR(1)) anomalies: hours are correlated, as in real records
    anomaly = np.zeros(hours)
    noise = rng.normal(0.0, 0.08, hours)
    for i in range(1, hours):
        anomaly[i] = 0.97 * anomaly[i - 1] + noise[i]
    hs = 0.65 * season * np.exp(anomaly * 0.9)
    tp = 9.5 + 2.0 * anomaly + rng.normal(0.0, 0.6, hours)
    turn = np.zeros(hours)
    noise = rng.normal(0.0, 2.0, hours)
    for i in range(1, hours):
        turn[i] = 0.98 * turn[i - 1] + noise[i]
    direction = 216.0 + turn + rng.normal(0.0, 4.0, hours)
    # wind sea from the south-east in spells of a few days
    spell = np.repeat(rng.random(hours // 72 + 1) < 0.22, 72)[:hours]
    hs = np.where(spell, 0.4 + 0.5 * rng.random(hours), hs)
    tp = np.where(spell, 4.5 + 1.5 * rng.random(hours), tp)
    direction = np.where(spell, 140.0 + 15.0 * rng.normal(size=hours), direction)
    # storms: a rise and fall over about two days
    for start in rng.choice(hours - 60, size=10, replace=False):
        peak = rng.uniform(2.5, 4.5)
        span = np.arange(48)
        shape = np.sin(np.pi * span / 47.0) ** 2
        sl = slice(start, start + 48)
        hs[sl] = np.maximum(hs[sl], 0.8 + (peak - 0.8) * shape)
        tp[sl] = np.maximum(tp[sl], 9.0 + 4.5 * shape)
        direction[sl] = rng.uniform(205.0, 240.0)
    return {
        "hs_m": np.clip(hs, 0.2, None),
        "tp_s": np.clip(tp, 3.0, 18.0),
        "dir_deg": direction % 360.0,
    }


def write_waves(path: Path) -> None:
    """Write the invented record as CSV (time, hs_m, tp_s, dir_deg)."""
    rec = wave_record()
    times = np.datetime64("2031-01-01T00:00") + np.arange(rec["hs_m"].size).astype("timedelta64[h]")
    with open(path, "w", encoding="utf-8") as handle:
        handle.write("# INVENTED wave record for the demo coast (seeded script make_demo.py)\n")
        handle.write("time,hs_m,tp_s,dir_deg\n")
        for t, h, p, d in zip(times, rec["hs_m"], rec["tp_s"], rec["dir_deg"], strict=True):
            handle.write(f"{t}Z,{h:.2f},{p:.1f},{d:.0f}\n")


if __name__ == "__main__":
    write_coast(HERE / "coast.geojson")
    write_waves(HERE / "waves.csv")
    write_structures(HERE / "structures.geojson")
    print(f"wrote coast.geojson, waves.csv and structures.geojson in {HERE} (invented demo data)")
