"""Writing GRIB test messages with Debian's python3-eccodes (ECMWF)."""
import eccodes as ec


def set_regular_grid(h, lat, lon):
    """A regular latitude-longitude grid on handle h: rows from lat[0] (north to south when lat descends,
    jScansPositively then 0), longitudes eastward from lon[0], stored in 0..360 as GRIB 2 requires."""
    for key, value in (("Ni", len(lon)), ("Nj", len(lat)), ("latitudeOfFirstGridPointInDegrees", lat[0]),
                       ("latitudeOfLastGridPointInDegrees", lat[-1]),
                       ("longitudeOfFirstGridPointInDegrees", lon[0] % 360),
                       ("longitudeOfLastGridPointInDegrees", lon[-1] % 360),
                       ("iDirectionIncrementInDegrees", abs(lon[1] - lon[0])),
                       ("jDirectionIncrementInDegrees", abs(lat[1] - lat[0])),
                       ("jScansPositively", 1 if lat[1] > lat[0] else 0)):
        ec.codes_set(h, key, value)
