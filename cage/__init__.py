"""cage: plan, drive and correct three-axis magnetic coil cages.

Public API (loaded lazily so the command line starts fast):

- ``cage.load_design(path) -> Design``: read and validate a ``cage-design`` JSON file.
- ``cage.field_T(design, currents_A, points_m) -> (n, 3) array``: the field in tesla of the
  whole cage at points in metres (cage frame), ``currents_A`` a mapping with keys x, y, z or
  a length-3 sequence, in amperes.
"""

__version__ = "0.1.0"
__all__ = ["load_design", "field_T", "__version__"]


def __getattr__(name):
    if name in ("load_design", "field_T"):
        from cage import designfile

        return getattr(designfile, name)
    raise AttributeError(f"module 'cage' has no attribute {name!r}")
