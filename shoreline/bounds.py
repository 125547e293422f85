"""Physical bounds of every input, with where each comes from: one table, used by every reader.

A value outside its bound is refused at the door (the study file) or in the wave record (an
error naming the line), so that no absurd number reaches the physics and comes out as infinite
transport or coordinates that are not numbers. The bounds are generous: they refuse what cannot
be (a significant height of 40 m, a grain density below that of water, a fetch longer than half
the Earth), not what is merely unusual. ``docs/study-file.md`` lists them in its "Input bounds"
table; a test checks that every bound here is there.

Examples
--------
>>> BOUNDS["hs_m"].check(1.2) is None
True
>>> BOUNDS["hs_m"].check(40.0)
'a number > 0 and <= 25 m (the highest significant wave heights recorded are about 20 m)'
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Bound:
    """The range a physical input must lie in, its unit and where the range comes from."""

    low: float
    high: float
    unit: str
    source: str
    basis: str  # how the source is known: "from memory", "common practice", "our choice"
    low_open: bool = True  # ``low`` itself is excluded (a length > 0) or included (>= 0)

    def contains(self, value):
        """True where ``value`` lies in the bound (works on numbers and numpy arrays)."""
        above = value > self.low if self.low_open else value >= self.low
        return above & (value <= self.high)

    def text(self) -> str:
        """The range in words, e.g. ``> 0 and <= 25 m``."""
        low = f"> {self.low:.10g}" if self.low_open else f">= {self.low:.10g}"
        unit = f" {self.unit}" if self.unit else ""
        return f"{low} and <= {self.high:.10g}{unit}"

    def check(self, value) -> str | None:
        """None if ``value`` is in the bound, else what was expected (for a study key)."""
        if self.contains(value):
            return None
        return f"a number {self.text()} ({self.source})"


#: The bound of each input, by the name of its key (study file) or column (wave record).
BOUNDS: dict[str, Bound] = {
    "hs_m": Bound(
        0.0,
        25.0,
        "m",
        "the highest significant wave heights recorded are about 20 m",
        "from memory",
    ),
    "tp_s": Bound(
        0.0,
        40.0,
        "s",
        "the longest swell periods observed are about 25-30 s; 40 s leaves room for the "
        "spectral peak of weak swell in a hindcast",
        "from memory",
    ),
    "depth_m": Bound(
        0.0, 11000.0, "m", "the deepest ocean trench is about 11 km deep", "from memory"
    ),
    "wind_speed_m_s": Bound(
        0.0,
        100.0,
        "m/s",
        "the strongest sustained winds measured are about 95 m/s",
        "from memory",
    ),
    "fetch_km": Bound(
        0.0,
        20000.0,
        "km",
        "half the Earth's circumference: no straight fetch is longer",
        "from memory",
    ),
    "duration_h": Bound(
        0.0,
        8766.0,
        "h",
        "one year: an event longer than that is a climate, not a storm",
        "our choice",
    ),
    "max_gap_h": Bound(0.0, 8766.0, "h", "one year: a longer step is no record", "our choice"),
    "open_sea_distance_m": Bound(
        1000.0,
        1000000.0,
        "m",
        "from a harbour basin's width to the width of a small ocean basin",
        "our choice",
    ),
    "ray_start_m": Bound(
        1.0,
        5000.0,
        "m",
        "beyond a few kilometres the ray start is no longer near the transect's own shore",
        "our choice",
    ),
    "spreading_s": Bound(
        1.0,
        1.0e6,
        "-",
        "s = 1 is a sea spread over the half-plane; by 1e6 a direction is open or shut (the "
        "geometric-shadow limit)",
        "our choice",
    ),
    "spacing_m": Bound(
        1.0,
        100000.0,
        "m",
        "below 1 m transects resolve digitising noise, not the shore; above 100 km there is no "
        "shoreline left to resolve",
        "our choice",
        low_open=False,
    ),
    "orientation_window_m": Bound(
        1.0,
        1000000.0,
        "m",
        "below 1 m the shore has no orientation to measure; 1000 km is a whole coast",
        "our choice",
        low_open=False,
    ),
    "transect_length_m": Bound(
        0.0,
        100000.0,
        "m",
        "a drawn transect; beyond 100 km a straight line in the local projection no longer "
        "follows the shore normal",
        "our choice",
    ),
    "exposure_distance_m": Bound(
        0.0,
        1000000.0,
        "m",
        "at 1000 km from its centre a transverse Mercator's scale error is about 1 %",
        "from memory",
    ),
    "d50_mm": Bound(
        0.06,
        64.0,
        "mm",
        "the Wentworth scale: below 0.0625 mm is silt and clay, above 64 mm cobbles",
        "common practice",
        low_open=False,
    ),
    "porosity": Bound(
        0.2,
        0.6,
        "",
        "a share between 0 and 1; natural sand and gravel deposits lie between about 0.25 and 0.5",
        "from memory",
        low_open=False,
    ),
    "density_kg_m3": Bound(
        1500.0,
        5500.0,
        "kg/m3",
        "sediment is denser than any water: quartz 2650, magnetite about 5200",
        "from memory",
        low_open=False,
    ),
    "water_density_kg_m3": Bound(
        990.0,
        1250.0,
        "kg/m3",
        "fresh water about 1000, sea water 1020-1030, the saltiest lakes about 1240",
        "from memory",
        low_open=False,
    ),
    "slope": Bound(
        0.001,
        0.7,
        "",
        "from a tidal flat (1:1000) to the angle of repose of gravel (about 35 degrees)",
        "from memory",
        low_open=False,
    ),
    "closure_depth_m": Bound(
        0.5,
        50.0,
        "m",
        "closure depths are about 1 m on sheltered lake shores and 10-20 m on exposed ocean coasts",
        "from memory",
        low_open=False,
    ),
    "berm_height_m": Bound(
        0.0,
        20.0,
        "m",
        "berms of storm gravel beaches reach about 10 m",
        "from memory",
        low_open=False,
    ),
    "cerc_k": Bound(
        0.0,
        2.0,
        "",
        "five times the 0.39 of SPM 1984 for significant height; larger is a unit mistake",
        "our choice",
    ),
    "kamphuis_coefficient": Bound(
        0.0,
        20.0,
        "",
        "about ten times the 2.27 of Kamphuis (1991); larger is a unit mistake",
        "our choice",
    ),
    "net_m3_per_yr": Bound(
        0.0,
        1.0e7,
        "m3/yr",
        "the largest net longshore transports measured are a few million m3/yr",
        "from memory",
    ),
}

# -- the forward projection ([projection], [[nourishment]]) ------------------------------------
BOUNDS |= {
    "sea_level_rise_m_per_yr": Bound(
        -0.1,
        0.1,
        "m/yr",
        "relative sea level changes by up to a few centimetres a year (subsiding deltas, "
        "rising land after the ice ages); 0.1 m/yr is far beyond every scenario",
        "from memory",
        low_open=False,
    ),
    "sea_level_rise_m": Bound(
        -5.0,
        5.0,
        "m",
        "the highest sea-level scenarios reach about 2 m by 2100 and a few metres by 2300",
        "from memory",
        low_open=False,
    ),
    "volume_m3": Bound(
        0.0,
        1.0e8,
        "m3",
        "the largest single beach nourishments place some 20 million m3",
        "from memory",
    ),
    "setback_m": Bound(
        0.0,
        10000.0,
        "m",
        "setback lines lie tens to hundreds of metres from the shore",
        "our choice",
    ),
}

#: The bounds on the longitude and latitude of coast vertices and wave points [deg]. 0-360
#: longitudes are accepted as well as -180-180.
LONGITUDE_DEG = (-180.0, 360.0)
LATITUDE_DEG = (-90.0, 90.0)

#: The largest number of transects one run lays out. Measured: about 20 kB of memory per
#: transect in a run (the exposure rays dominate), so 500,000 transects need some 10 GB.
MAX_TRANSECTS = 500_000

#: Values this large in a wave record are the netCDF default fill value (9.96921e36), written
#: where a variable without ``_FillValue`` was never filled: they are missing, not waves.
NETCDF_DEFAULT_FILL = 9.9e36


# Settings of the run itself (not physical inputs): how long to wait for a Dask scheduler.

#: ``[run] scheduler_timeout_s``: the wait for an existing Dask scheduler to answer.
SCHEDULER_TIMEOUT_S = Bound(
    0.0,
    600.0,
    "s",
    "a scheduler that has not answered in ten minutes is taken as unreachable",
    "our choice",
)
