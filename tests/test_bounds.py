"""The physical bounds: every value that is not a number in range fails, NaN and infinity too."""

import numpy as np

from shoreline.bounds import BOUNDS, NETCDF_DEFAULT_FILL


def test_bounds_refuse_nan_and_infinity_and_keep_their_ends():
    for key, bound in BOUNDS.items():
        values = np.array([np.nan, np.inf, -np.inf, bound.low, bound.high])
        ok = bound.contains(values)
        assert ok.tolist() == [False, False, False, not bound.low_open, True], key
        assert bound.low < bound.high and np.isfinite(bound.high), key
        assert bound.basis in ("from memory", "common practice", "our choice"), key


def test_every_default_lies_within_its_bound():
    from shoreline.study import SCHEMA

    for section, keys in SCHEMA.items():
        for key, spec in keys.items():
            if key in BOUNDS and isinstance(spec.default, float):
                assert BOUNDS[key].check(spec.default) is None, f"[{section}] {key}"


def test_netcdf_default_fill_value_is_above_every_bound():
    # NC_FILL_FLOAT and NC_FILL_DOUBLE are both 9.9692099683868690e+36 (netCDF-C, from memory)
    assert NETCDF_DEFAULT_FILL < 9.9692099683868690e36
    assert all(bound.high < NETCDF_DEFAULT_FILL for bound in BOUNDS.values())
