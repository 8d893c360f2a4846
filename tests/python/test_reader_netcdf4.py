"""The reader against netCDF4-python (Debian python3-netcdf4, Unidata) and cftime.

netCDF4-python's masked, auto-scaled read (CF Conventions 1.10 sec. 8.1 packing,
sec. 2.5.1 _FillValue/missing_value/valid_range) is the independent reference for
values; cftime.num2date (CF sec. 4.4) for dates. Geopotential height =
geopotential / 9.80665 (WMO standard gravity)."""
import json
import os
import shutil

import cftime
import netCDF4
import numpy as np

from common import BIN, check, finish, run, scratch, tool

G0 = 9.80665
tmp = scratch()
rng = np.random.default_rng(7)


def expected_from_nc(path, var, lat_rng, lon_west, extent, level=None, geopot=False):
    """Values over the domain, ordered as isohypse promises: time, lat ascending, lon eastward from lon_west."""
    with netCDF4.Dataset(path) as ds:
        v = ds[var]
        v.set_auto_maskandscale(True)
        data = v[:]
        if level is not None:
            data = data[:, level]
        lat = ds["lat"][:] if "lat" in ds.variables else ds["latitude"][:]
        lon = ds["lon"][:] if "lon" in ds.variables else ds["longitude"][:]
    data = np.ma.filled(data.astype(np.float64), np.nan)
    if geopot:
        data = data / G0
    li = np.where((lat >= lat_rng[0] - 1e-6) & (lat <= lat_rng[1] + 1e-6))[0]
    li = li[np.argsort(lat[li])]
    off = np.mod(lon - lon_west, 360.0)
    lj = np.where(off <= extent + 1e-6)[0] if extent < 360 else np.arange(len(lon))
    lj = lj[np.argsort(off[lj])]
    sub = data[:, li][:, :, lj]
    return sub, lat[li], lon_west + off[lj]


def compare(got, exp, lat, lon, what, tol=1e-3):
    vals = np.array([np.nan if x is None else x for x in got["values"]], dtype=np.float64).reshape(exp.shape)
    check(np.allclose(got["lat"], lat) and np.allclose(got["lon"], lon), f"{what}: grid order (lat ascending, lon contiguous)")
    same_mask = np.array_equal(np.isnan(vals), np.isnan(exp))
    check(same_mask, f"{what}: missing values in the same places ({int(np.isnan(exp).sum())} missing)")
    diff = np.nanmax(np.abs(vals - exp))
    check(diff < tol, f"{what}: values equal netCDF4-python within {tol} m (max diff {diff:.2e})")
    return vals


# 1. Packed int16 geopotential, descending latitudes, -180..180, 360_day calendar.
p1 = os.path.join(tmp, "packed_360day.nc")
with netCDF4.Dataset(p1, "w", format="NETCDF4_CLASSIC") as ds:
    ds.createDimension("time", None)
    ds.createDimension("latitude", 31)
    ds.createDimension("longitude", 72)
    t = ds.createVariable("time", "f8", ("time",))
    t.units = "days since 2001-02-25 00:00:00"
    t.calendar = "360_day"
    la = ds.createVariable("latitude", "f4", ("latitude",))
    la.units = "degrees_north"
    lo = ds.createVariable("longitude", "f4", ("longitude",))
    lo.units = "degrees_east"
    z = ds.createVariable("z", "i2", ("time", "latitude", "longitude"), fill_value=-32767)
    z.standard_name = "geopotential"
    z.units = "m**2 s**-2"
    z.scale_factor = 0.9
    z.add_offset = 51000.0
    z.missing_value = np.int16(-32000)
    la[:] = np.linspace(90, 15, 31)          # descending
    lo[:] = np.arange(-180, 180, 5.0)        # -180..175
    t[:] = np.arange(8)                      # crosses 02-30 -> 03-01 in 360_day
    heights = 5500 + 300 * np.cos(np.deg2rad(la[:]))[None, :, None] + rng.normal(0, 40, (8, 31, 72))
    z[:] = heights * G0
    raw = z[:]
    z.set_auto_maskandscale(False)
    packed = z[:]
    packed[1, 3, 10] = -32767                # fill
    packed[2, 5, 40] = -32000                # missing_value
    z[:] = packed
got = tool("read_tool", "--domain", "20,80,170,-40", p1)
exp, lat, lon = expected_from_nc(p1, "z", (20, 80), 170, 150, geopot=True)
compare(got, exp, lat, lon, "packed int16 geopotential across the dateline")
with netCDF4.Dataset(p1) as ds:
    cf = [d.strftime("%Y-%m-%d") for d in cftime.num2date(ds["time"][:], ds["time"].units, "360_day")]
check(got["dates"] == cf, f"360_day dates equal cftime's ({cf[4]}, {cf[5]})")
check("2001-02-30" in got["dates"] and got["dates"][got["dates"].index("2001-02-30") + 1] == "2001-03-01",
      "360_day: 2001-02-30 exists and is followed by 2001-03-01")
# A check value worked by hand (METHODS.md sec. 1): 12345 * 0.5 + 50000 = 56172.5 m2 s-2 -> 5728.0009 m.
check(abs(56172.5 / G0 - 5728.0009) < 1e-4, "geopotential check value 56172.5 m2 s-2 = 5728.0009 m")

# 2. Float heights with a level dimension in Pa on a global 0..360 grid, ascending latitudes,
#    a domain across the prime meridian, and 6-hourly steps averaged to daily means.
p2 = os.path.join(tmp, "levels_6h.nc")
with netCDF4.Dataset(p2, "w", format="NETCDF3_64BIT_OFFSET") as ds:
    ds.createDimension("time", 12)
    ds.createDimension("plev", 3)
    ds.createDimension("lat", 37)
    ds.createDimension("lon", 144)
    t = ds.createVariable("time", "f8", ("time",))
    t.units = "hours since 2020-02-27 00:00"
    t.calendar = "noleap"
    pl = ds.createVariable("plev", "f4", ("plev",))
    pl.units = "Pa"
    la = ds.createVariable("lat", "f4", ("lat",))
    la.units = "degrees_north"
    lo = ds.createVariable("lon", "f4", ("lon",))
    lo.units = "degrees_east"
    zg = ds.createVariable("zg", "f4", ("time", "plev", "lat", "lon"), fill_value=np.float32(1e20))
    zg.standard_name = "geopotential_height"
    zg.units = "m"
    t[:] = np.arange(12) * 6
    pl[:] = [85000, 50000, 25000]
    la[:] = np.linspace(0, 90, 37)
    lo[:] = np.arange(0, 360, 2.5)
    zg[:] = 5400 + rng.normal(0, 50, (12, 3, 37, 144)).astype(np.float32)
    zg[3, 1, 20, 5] = np.float32(1e20)
got = tool("read_tool", "--daily-mean", "--domain", "20,80,-90,30", p2)
exp6, lat, lon = expected_from_nc(p2, "zg", (20, 80), -90, 120, level=1)
daily = np.nanmean(exp6.reshape(3, 4, *exp6.shape[1:]), axis=1)
compare(got, daily, lat, lon, "levels in Pa, 0..360 grid, domain across the prime meridian, 6-hourly to daily means", tol=2e-3)
check(got["dates"] == ["2020-02-27", "2020-02-28", "2020-03-01"], f"noleap: 2020-02-28 is followed by 2020-03-01 ({got['dates']})")
r = run([BIN, "inspect", p2])
check(r.returncode == 0 and "sub-daily" in r.stdout and "850 500 250 hPa" in r.stdout, "inspect names the levels and the sub-daily step")
r = run([os.path.dirname(BIN) + "/tools/read_tool", p2])
check(r.returncode != 0 and "daily mean" in r.stderr, "sub-daily data without --daily-mean is refused with advice")

# 3. Several files, one per year, joined with a duplicate and a gap.
parts = []
for k, (start, n) in enumerate([(0, 5), (4, 3), (9, 2)]):
    p = os.path.join(tmp, f"part{k}.nc")
    with netCDF4.Dataset(p, "w") as ds:
        ds.createDimension("time", None)
        ds.createDimension("lat", 5)
        ds.createDimension("lon", 8)
        t = ds.createVariable("time", "i4", ("time",))
        t.units = "days since 1999-12-30"
        la = ds.createVariable("lat", "f4", ("lat",)); la.units = "degrees_north"
        lo = ds.createVariable("lon", "f4", ("lon",)); lo.units = "degrees_east"
        h = ds.createVariable("hgt", "f4", ("time", "lat", "lon"))
        h.units = "gpm"
        t[:] = np.arange(start, start + n)
        la[:] = [30, 40, 50, 60, 70]
        lo[:] = np.arange(0, 360, 45)
        h[:] = 5500 + np.arange(start, start + n)[:, None, None] + np.zeros((n, 5, 8))
    parts.append(p)
got = tool("read_tool", *reversed(parts))
check(len(got["dates"]) == 9 and got["dates"][0] == "1999-12-30" and got["missing_days"] == 2 and got["duplicates"] == 1,
      f"files ordered and joined in time: 9 days, 1 duplicate, a 2-day gap ({got['dates'][0]}..{got['dates'][-1]})")

# 3b. Float heights of an ensemble file with three missing_value codes, a valid_range, NaN and
#     Inf: every such value is missing (CF 1.10 sec. 2.5.1; a non-finite value is taken as
#     missing, isohypse's documented choice), read member by member, and inspect counts them.
p3 = os.path.join(tmp, "codes.nc")
with netCDF4.Dataset(p3, "w", format="NETCDF4") as ds:
    ds.createDimension("number", 3)
    ds.createDimension("time", 4)
    ds.createDimension("lat", 9)
    ds.createDimension("lon", 16)
    nb = ds.createVariable("number", "i4", ("number",)); nb[:] = [0, 1, 2]
    t = ds.createVariable("time", "f8", ("time",)); t.units = "days since 2024-01-01"; t[:] = np.arange(4)
    la = ds.createVariable("lat", "f4", ("lat",)); la.units = "degrees_north"; la[:] = np.linspace(20, 80, 9)
    lo = ds.createVariable("lon", "f4", ("lon",)); lo.units = "degrees_east"; lo[:] = np.arange(0, 360, 22.5)
    h = ds.createVariable("gh", "f4", ("number", "time", "lat", "lon"))
    h.standard_name = "geopotential_height"
    h.units = "m"
    h.missing_value = np.array([-999.0, -888.0, 9999.0], np.float32)
    h.valid_range = np.array([3000.0, 7000.0], np.float32)
    vals = (5500 + rng.normal(0, 60, (3, 4, 9, 16))).astype(np.float32)
    vals[0, 1, 2, 3] = -999.0
    vals[1, 2, 4, 5] = -888.0
    vals[2, 3, 6, 7] = 9999.0
    vals[0, 0, 8, 15] = 2500.0       # below valid_range
    vals[1, 0, 0, 0] = np.nan
    vals[2, 1, 1, 1] = np.inf
    h.set_auto_maskandscale(False)
    h[:] = vals
with netCDF4.Dataset(p3) as ds:  # netCDF4-python's masked read (auto mask on)
    masked = np.ma.filled(ds["gh"][:].astype(np.float64), np.nan)
    lat, lon = ds["lat"][:], ds["lon"][:]
for member in range(3):
    got = tool("read_tool", "--member", str(member), p3)
    exp = masked[member].copy()
    exp[~np.isfinite(exp)] = np.nan
    compare(got, exp, lat, lon, f"three missing_value codes, valid_range, NaN and Inf, member {member}")
j = json.loads(run([BIN, "inspect", "--json", p3]).stdout)
check(j["missing_values"] == 6, f"inspect counts the 6 missing values of every kind ({j['missing_values']})")

# 3c. Compressed NetCDF-4 (zlib, with and without shuffle), whose chunks isohypse reads
#     directly with HDF5 and inflates itself (src/hdf5_chunks.cpp): float32, float64 and
#     packed int16, chunks that do not divide the grid, a domain across the dateline that cuts
#     chunks, a never-written chunk and fletcher32 (both left to netCDF-C). Every value must
#     equal netCDF4-python's (Unidata netCDF4-python, masked and scaled read).
def compressed_case(name, dtype, shuffle, fletcher32=False, unwritten=False):
    path = os.path.join(tmp, name)
    nm, nt, nla, nlo = 3, 5, 37, 72
    with netCDF4.Dataset(path, "w", format="NETCDF4") as ds:
        ds.createDimension("number", nm)
        ds.createDimension("time", nt)
        ds.createDimension("lat", nla)
        ds.createDimension("lon", nlo)
        nb = ds.createVariable("number", "i4", ("number",)); nb[:] = np.arange(nm)
        t = ds.createVariable("time", "f8", ("time",)); t.units = "days since 2024-12-30"; t[:] = np.arange(nt)
        la = ds.createVariable("lat", "f4", ("lat",)); la.units = "degrees_north"; la[:] = np.linspace(90, -90, nla)
        lo = ds.createVariable("lon", "f4", ("lon",)); lo.units = "degrees_east"; lo[:] = np.arange(0, 360, 5.0)
        fill = {"i2": np.int16(-32767), "f4": np.float32(1e20), "f8": 1e20}[dtype]
        z = ds.createVariable("z", dtype, ("number", "time", "lat", "lon"), zlib=True, complevel=4, shuffle=shuffle,
                              fletcher32=fletcher32, chunksizes=(1, 2, 10, 14), fill_value=fill)
        z.standard_name = "geopotential"
        z.units = "m2 s-2"
        if dtype == "i2":
            z.scale_factor = 0.9
            z.add_offset = 52000.0
        vals = (5500 + 200 * np.cos(np.deg2rad(la[:]))[None, None, :, None]
                + rng.normal(0, 50, (nm, nt, nla, nlo))) * G0
        if unwritten:                    # member 1 never writes the chunk [0:2, 0:10, 42:56] (80-45N, 210-275E)
            for m in (0, 2):
                z[m] = vals[m]
            z[1, 2:] = vals[1, 2:]
            z[1, 0:2, 10:] = vals[1, 0:2, 10:]
            z[1, 0:2, 0:10, 0:42] = vals[1, 0:2, 0:10, 0:42]
            z[1, 0:2, 0:10, 56:] = vals[1, 0:2, 0:10, 56:]
        else:
            z[:] = vals
        if dtype == "i2":                # a fill value inside a compressed chunk
            z.set_auto_maskandscale(False)
            z[1, 3, 8, 40] = -32767
            z.set_auto_maskandscale(True)
    with netCDF4.Dataset(path) as ds:
        masked = np.ma.filled(ds["z"][:].astype(np.float64), np.nan) / G0
        flat, flon = np.asarray(ds["lat"][:], float), np.asarray(ds["lon"][:], float)
    li = np.where((flat >= 20 - 1e-6) & (flat <= 80 + 1e-6))[0][::-1]
    off = np.mod(flon - 170.0, 360.0)
    lj = np.where(off <= 150 + 1e-6)[0]
    lj = lj[np.argsort(off[lj])]
    for m in range(nm):
        got = tool("read_tool", "--member", str(m), "--domain", "20,80,170,-40", path)
        exp = masked[m][:, li][:, :, lj]
        compare(got, exp, flat[li], 170.0 + off[lj], f"compressed {name}, member {m}", tol=2e-3)
    return json.loads(run([BIN, "inspect", "--json", path]).stdout).get("chunks_inflated_by_isohypse")


direct = [compressed_case("zlib_f4.nc", "f4", shuffle=False),
          compressed_case("zlib_shuffle_f4.nc", "f4", shuffle=True),
          compressed_case("zlib_shuffle_f8.nc", "f8", shuffle=True),
          compressed_case("zlib_shuffle_i2.nc", "i2", shuffle=True),
          compressed_case("zlib_unwritten.nc", "f4", shuffle=False, unwritten=True)]
check(direct == [True] * 5, f"zlib chunks are read directly and inflated by isohypse ({direct})")
check(compressed_case("zlib_fletcher32.nc", "f4", shuffle=True, fletcher32=True) is False,
      "a fletcher32 checksum leaves the reading to netCDF-C")

# 4. Real data that a Debian package ships: hgt.nc of libncarg-data.
HGT = "/usr/share/ncarg/data/cdf/hgt.nc"
if os.path.exists(HGT):
    got = tool("read_tool", HGT)
    exp, lat, lon = expected_from_nc(HGT, "HGT", (-90, 90), 0, 360)
    vals = compare(got, exp, lat, lon, "hgt.nc (libncarg-data) whole grid")
    # Common practice: 500 hPa heights lie near 4.7-6.0 km.
    check(np.nanmin(vals) > 4500 and np.nanmax(vals) < 6100, f"hgt.nc heights within 4500..6100 m ({np.nanmin(vals):.0f}..{np.nanmax(vals):.0f})")
    # "months since 1958-1-1" decoded as calendar months (documented choice): 0 -> Jan 1958, 1 -> Feb 1958, 13 -> Feb 1959.
    with netCDF4.Dataset(HGT) as ds:
        months = ds["time"][:]
    exp_dates = [f"{1958 + (m // 12):04d}-{m % 12 + 1:02d}-01" for m in months]
    check(got["dates"] == exp_dates, "hgt.nc 'months since' decoded as calendar months")
    r = run([BIN, "inspect", "--json", HGT])
    j = json.loads(r.stdout)
    check(j["variable"] == "HGT" and j["units"] == "gpm" and j["grid"]["n_lat"] == 73 and j["steps"] == 21
          and j["missing_values"] == 0 and j["calendar"] == "standard", "inspect --json describes hgt.nc")
else:
    check(False, "libncarg-data's hgt.nc is installed (the test command installs it)")

# 5. Bad input: one clear message naming the file, a non-zero exit.
def refused(args, code, words, what):
    r = run([BIN, *args])
    msg = r.stderr.strip()
    ok = r.returncode == code and all(w in msg for w in words) and msg.count("\n") <= 12
    check(ok, f"{what}: exit {r.returncode}, message: {msg.splitlines()[-1] if msg else '(none)'}")

r = run([BIN, "inspect"])
check(r.returncode == 1 and "required" in r.stderr, f"a usage error (no file named) exits 1: {r.stderr.strip()[:80]}")
missing = os.path.join(tmp, "nope.nc")
refused(["inspect", missing], 2, [missing, "no such file"], "a missing file")
junk = os.path.join(tmp, "junk.nc")
open(junk, "w").write("this is not netcdf\n" * 10)
refused(["inspect", junk], 3, [junk, "not a NetCDF"], "a file that is not NetCDF")
trunc = os.path.join(tmp, "truncated.nc")
data = open(p2, "rb").read()
open(trunc, "wb").write(data[: len(data) // 3])
r = run([os.path.dirname(BIN) + "/tools/read_tool", "--daily-mean", trunc])
check(r.returncode != 0 and trunc in r.stderr, f"a truncated file is refused naming it: {r.stderr.strip()[:150]}")
trunc4 = os.path.join(tmp, "truncated4.nc")
data = open(p1, "rb").read()
open(trunc4, "wb").write(data[: len(data) // 2])
r = run([os.path.dirname(BIN) + "/tools/read_tool", trunc4])
check(r.returncode != 0 and trunc4 in r.stderr, f"a truncated NetCDF-4 file is refused naming it: {r.stderr.strip()[:150]}")
# A compressed NetCDF-4 file cut short, and one with damaged chunk bytes (isohypse inflates those itself).
ztrunc = os.path.join(tmp, "zlib_truncated.nc")
data = open(os.path.join(tmp, "zlib_shuffle_f4.nc"), "rb").read()
open(ztrunc, "wb").write(data[: len(data) // 2])
refused(["inspect", ztrunc], 3, [ztrunc, "truncated or damaged"], "a truncated compressed NetCDF-4 file")
zbad = os.path.join(tmp, "zlib_damaged.nc")
damaged = bytearray(open(os.path.join(tmp, "zlib_f4.nc"), "rb").read())
for i in range(len(damaged) // 2, len(damaged) // 2 + 4000):
    damaged[i] ^= 0x5A
open(zbad, "wb").write(bytes(damaged))
r = run([os.path.dirname(BIN) + "/tools/read_tool", "--member", "0", zbad])
r1 = run([os.path.dirname(BIN) + "/tools/read_tool", "--member", "1", zbad])
r2 = run([os.path.dirname(BIN) + "/tools/read_tool", "--member", "2", zbad])
bad = [x for x in (r, r1, r2) if x.returncode != 0]
check(len(bad) >= 1 and all(zbad in x.stderr and ("damaged" in x.stderr or "HDF" in x.stderr) for x in bad),
      f"damaged compressed chunks are refused naming the file: {bad[0].stderr.strip()[:150] if bad else 'no member failed'}")
nohgt = os.path.join(tmp, "temperature.nc")
with netCDF4.Dataset(nohgt, "w") as ds:
    ds.createDimension("time", 1); ds.createDimension("lat", 2); ds.createDimension("lon", 2)
    v = ds.createVariable("t", "f4", ("time", "lat", "lon")); v.units = "K"; v.standard_name = "air_temperature"
refused(["inspect", nohgt], 3, [nohgt, "no geopotential"], "no height variable")
nolev = os.path.join(tmp, "no500.nc")
with netCDF4.Dataset(nolev, "w") as ds:
    ds.createDimension("time", 1); ds.createDimension("level", 2); ds.createDimension("lat", 2); ds.createDimension("lon", 2)
    t = ds.createVariable("time", "f8", ("time",)); t.units = "days since 2000-01-01"
    lv = ds.createVariable("level", "f4", ("level",)); lv.units = "hPa"; lv[:] = [850, 250]
    la = ds.createVariable("lat", "f4", ("lat",)); la.units = "degrees_north"; la[:] = [10, 20]
    lo = ds.createVariable("lon", "f4", ("lon",)); lo.units = "degrees_east"; lo[:] = [0, 10]
    v = ds.createVariable("hgt", "f4", ("time", "level", "lat", "lon")); v.units = "m"; v.standard_name = "geopotential_height"
refused(["inspect", nolev], 3, [nolev, "no 500 hPa level", "850, 250"], "no 500 hPa level")
r = run([os.path.dirname(BIN) + "/tools/read_tool", "--domain", "20,80,170,-40", parts[0]])
check(r.returncode != 0 and "not covered" in r.stderr and parts[0] in r.stderr, f"a domain outside the grid: {r.stderr.strip()[:160]}")
allnan = os.path.join(tmp, "allmissing.nc")
shutil.copy(p1, allnan)
with netCDF4.Dataset(allnan, "a") as ds:
    ds["z"].set_auto_maskandscale(False)
    ds["z"][:] = -32767
r = run([os.path.dirname(BIN) + "/tools/read_tool", "--domain", "20,80,170,-40", allnan])
check(r.returncode != 0 and "missing" in r.stderr and allnan in r.stderr, f"a domain that is all missing values: {r.stderr.strip()[:160]}")
finish()
