#!/usr/bin/python3
"""The classify benchmark's NetCDF forecasts written again as GRIB 2 with
python3-eccodes (ECMWF's ecCodes, the same library isohypse links), for the
GRIB benchmark of issue 14 (bench/run-grib-bench.sh).

  write_grib_forecasts.py --netcdf 'DIR/fc_*.nc' --out GRIBDIR [--bits 16]

One GRIB file per NetCDF file (one initialisation each), one message per
member and lead: geopotential at 500 hPa (paramId 129, m2 s-2, as the
NetCDF files hold it), the values of the float32 NetCDF field packed with
grid_simple at --bits bits per value (WMO FM 92 GRIB edition 2, data
representation template 5.0), product definition template 4.1 (individual
ensemble member: perturbationNumber, the control member 0 with
typeOfProcessedData 3, the others 4), dataDate/dataTime of the
initialisation, forecastTime in hours. Rows are written north to south
(jScansPositively 0), as ECMWF's archive does. The NetCDF files are on the
noleap calendar; their December-January dates are the same Gregorian dates
(no 29 February falls in them), which the writer checks.
"""
import argparse
import glob
import os
import sys

import eccodes as ec
import netCDF4
import numpy as np


def template(lat, lon, init, n_members, bits):
    """A GRIB 2 handle with everything a message shares: grid, level,
    parameter, initialisation, packing."""
    h = ec.codes_grib_new_from_samples("regular_ll_pl_grib2")
    for key, value in (("Ni", len(lon)), ("Nj", len(lat)),
                       ("latitudeOfFirstGridPointInDegrees", float(lat[0])),
                       ("latitudeOfLastGridPointInDegrees", float(lat[-1])),
                       ("longitudeOfFirstGridPointInDegrees", float(lon[0]) % 360),
                       ("longitudeOfLastGridPointInDegrees", float(lon[-1]) % 360),
                       ("iDirectionIncrementInDegrees", abs(float(lon[1] - lon[0]))),
                       ("jDirectionIncrementInDegrees", abs(float(lat[1] - lat[0]))),
                       ("jScansPositively", 0)):
        ec.codes_set(h, key, value)
    ec.codes_set(h, "productDefinitionTemplateNumber", 1)
    ec.codes_set(h, "numberOfForecastsInEnsemble", n_members)
    ec.codes_set(h, "paramId", 129)
    ec.codes_set(h, "typeOfLevel", "isobaricInhPa")
    ec.codes_set(h, "level", 500)
    ec.codes_set(h, "dataDate", init.year * 10000 + init.month * 100 + init.day)
    ec.codes_set(h, "dataTime", init.hour * 100 + init.minute)
    ec.codes_set(h, "indicatorOfUnitOfTimeRange", 1)
    ec.codes_set(h, "packingType", "grid_simple")
    ec.codes_set(h, "bitsPerValue", bits)
    return h


def write_one(nc_path, out_path, bits):
    """Returns the number of messages written."""
    with netCDF4.Dataset(nc_path) as ds:
        ds.set_auto_mask(False)
        var = ds["z"]
        if var.standard_name != "geopotential" or var.dimensions[2:] != ("latitude", "longitude"):
            raise ValueError(f"{nc_path}: expected geopotential z (number, time, latitude, longitude)")
        z = np.asarray(var[:], np.float64)
        lat, lon = np.asarray(ds["latitude"][:], float), np.asarray(ds["longitude"][:], float)
        t = ds["time"]
        times = netCDF4.num2date(t[:], t.units, t.calendar)
    if lat[0] < lat[-1]:
        lat, z = lat[::-1], z[:, :, ::-1, :]
    init = times[0]
    if (init.month, init.day) == (2, 29) or any((d.month, d.day) == (2, 29) for d in times):
        raise ValueError(f"{nc_path}: a 29 February would differ between the file's calendar and GRIB's")
    hours = np.array([(d - init).total_seconds() / 3600.0 for d in times])
    base = template(lat, lon, init, z.shape[0], bits)
    n = 0
    with open(out_path + ".part", "wb") as f:
        for m in range(z.shape[0]):
            for lead in range(z.shape[1]):
                h = ec.codes_clone(base)
                ec.codes_set(h, "typeOfProcessedData", 3 if m == 0 else 4)
                ec.codes_set(h, "perturbationNumber", m)
                ec.codes_set(h, "forecastTime", int(round(hours[lead])))
                ec.codes_set_values(h, z[m, lead].ravel())
                ec.codes_write(h, f)
                ec.codes_release(h)
                n += 1
    ec.codes_release(base)
    os.replace(out_path + ".part", out_path)
    return n


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--netcdf", required=True, help="glob of the NetCDF forecast files")
    ap.add_argument("--out", required=True, help="folder for the GRIB files")
    ap.add_argument("--bits", type=int, default=16)
    a = ap.parse_args()
    os.makedirs(a.out, exist_ok=True)
    paths = sorted(glob.glob(a.netcdf))
    if not paths:
        print(f"no file matches {a.netcdf}", file=sys.stderr)
        return 2
    for p in paths:
        out = os.path.join(a.out, os.path.splitext(os.path.basename(p))[0] + ".grib2")
        n = write_one(p, out, a.bits)
        print(f"  {os.path.basename(out)}: {n} messages, {os.path.getsize(out) / 1e6:.1f} MB", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
