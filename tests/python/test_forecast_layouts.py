"""Forecast files in CF lead layouts (issue 14), written with netCDF4-python (Debian python3-netcdf4), each with
its expected valid dates:
- zg(member, lead, lat, lon): a lead coordinate in whole days (units "days", standard_name forecast_period, as
  Python writers store time deltas), a valid_time(lead) coordinate named in the variable's `coordinates`
  attribute, and a scalar forecast_reference_time (CF Conventions 1.10, sec. 4.4 and Appendix A:
  forecast_period, forecast_reference_time);
- z(time=1, step, number, latitude, longitude): geopotential in m2 s-2, 6-hourly steps in hours, the
  initialisation as a time dimension of length 1 (the layout GRIB-to-NetCDF converters write);
- zg(lead, lat, lon) with the lead in hours and only a valid-time coordinate (the initialisation inferred);
values against netCDF4-python's masked, scaled read (geopotential height = geopotential / 9.80665, WMO
standard gravity); then `classify` on the small invented world's forecasts rewritten into the first two layouts
gives the same probabilities as on the originals. Several initialisations in one file (an initialisation dimension beside
the lead, a 2-D valid time) and hindcasts (one file per day of the year, the past years along a dimension) give
the guidance of one file per initialisation. Bad input: a lead without units, valid times that disagree with the
reference time plus the lead (1-D and 2-D): a clear message naming the file."""
import datetime
import glob
import json
import os

import netCDF4
import numpy as np

from common import BIN, check, finish, run, scratch, tool
from daily_season import small_world_model

G0 = 9.80665
tmp = scratch()
rng = np.random.default_rng(14)
LAT = np.arange(80.0, 19.0, -2.5)  # descending
LON = np.arange(0.0, 360.0, 2.5)


def horizontal(ds, lat="lat", lon="lon"):
    ds.createDimension(lat, len(LAT))
    ds.createDimension(lon, len(LON))
    v = ds.createVariable(lat, "f4", (lat,))
    v.units, v.standard_name, v[:] = "degrees_north", "latitude", LAT
    v = ds.createVariable(lon, "f4", (lon,))
    v.units, v.standard_name, v[:] = "degrees_east", "longitude", LON


def lead_days_file(path, init, leads, members, values, valid_shift_hours=0.0, lead_units="days"):
    """zg(member, lead, lat, lon), lead in whole days, valid_time(lead), scalar forecast_reference_time."""
    with netCDF4.Dataset(path, "w") as ds:
        horizontal(ds)
        ds.createDimension("member", members)
        ds.createDimension("lead", len(leads))
        m = ds.createVariable("member", "i4", ("member",))
        m.standard_name, m[:] = "realization", np.arange(members)
        ld = ds.createVariable("lead", "i4", ("lead",))
        ld.standard_name = "forecast_period"
        if lead_units:
            ld.units = lead_units
        ld[:] = leads
        vt = ds.createVariable("valid_time", "f8", ("lead",))
        vt.standard_name, vt.units, vt.calendar = "time", "hours since 2000-01-01 00:00", "proleptic_gregorian"
        vt[:] = netCDF4.date2num([init + datetime.timedelta(days=int(x), hours=valid_shift_hours) for x in leads],
                                 vt.units, vt.calendar)
        rt = ds.createVariable("forecast_reference_time", "f8", ())
        rt.standard_name, rt.units, rt.calendar = "forecast_reference_time", "hours since 2000-01-01 00:00", \
            "proleptic_gregorian"
        rt[...] = netCDF4.date2num(init, rt.units, rt.calendar)
        z = ds.createVariable("zg", "f4", ("member", "lead", "lat", "lon"))
        z.units, z.standard_name, z.coordinates = "m", "geopotential_height", "valid_time forecast_reference_time"
        z[:] = values


def step_hours_file(path, init, steps_h, members, values, n_times=1):
    """z(time, step, number, latitude, longitude) in m2 s-2; step in hours; time = the initialisation(s)."""
    with netCDF4.Dataset(path, "w") as ds:
        horizontal(ds, "latitude", "longitude")
        ds.createDimension("time", n_times)
        ds.createDimension("step", len(steps_h))
        ds.createDimension("number", members)
        t = ds.createVariable("time", "i8", ("time",))
        t.standard_name, t.units, t.calendar = "forecast_reference_time", "days since 1970-01-01", "proleptic_gregorian"
        t[:] = [netCDF4.date2num(init + datetime.timedelta(days=i), t.units, t.calendar) for i in range(n_times)]
        s = ds.createVariable("step", "i8", ("step",))
        s.standard_name, s.units, s[:] = "forecast_period", "hours", steps_h
        n = ds.createVariable("number", "i4", ("number",))
        n.standard_name, n[:] = "realization", np.arange(members)
        z = ds.createVariable("z", "f4", ("time", "step", "number", "latitude", "longitude"))
        z.units, z.standard_name = "m2 s-2", "geopotential"
        z[:] = np.broadcast_to(values * G0, (n_times,) + values.shape)


def check_read(what, path, member, want_dates, want_hours, want_init, want_values):
    got = tool("read_tool", "--member", str(member), path)
    ok_dates = got["dates"] == [d.isoformat() for d in want_dates] and np.allclose(got["hours"], want_hours)
    check(ok_dates and got.get("init") == want_init.isoformat(),
          f"{what}: {len(want_dates)} valid times {got['dates'][0]} {got['hours'][0]:g}h .. {got['dates'][-1]} "
          f"{got['hours'][-1]:g}h, initialised {got.get('init')} (expected {want_init})")
    vals = np.array(got["values"], float).reshape(len(want_dates), len(LAT), len(LON))
    diff = np.abs(vals - want_values[:, ::-1, :]).max()  # the reader returns latitudes ascending
    check(diff < 1e-3, f"{what}: member {member}'s values equal netCDF4-python's (max difference {diff:.1e} m)")


# ---- reading each layout
init = datetime.datetime(2026, 1, 10)
leads = np.arange(0, 11)
field = (5500 + 100 * rng.standard_normal((3, len(leads), len(LAT), len(LON)))).astype(np.float32)
p = os.path.join(tmp, "lead_days.nc")
lead_days_file(p, init, leads, 3, field)
check_read("zg(member, lead, lat, lon), lead in days, valid_time and forecast_reference_time", p, 2,
           [(init + datetime.timedelta(days=int(x))).date() for x in leads], [0.0] * len(leads), init.date(), field[2])

steps = np.arange(0, 48, 6)
six = (5500 + 100 * rng.standard_normal((len(steps), 2, len(LAT), len(LON)))).astype(np.float32)
p = os.path.join(tmp, "step_hours.nc")
step_hours_file(p, datetime.datetime(2026, 1, 15), steps, 2, six)
with netCDF4.Dataset(p) as ds:
    want = np.asarray(ds["z"][0, :, 1], float) / G0
check_read("z(time=1, step, number, latitude, longitude), 6-hourly steps in hours, geopotential", p, 1,
           [datetime.date(2026, 1, 15 + int(h) // 24) for h in steps], [h % 24 for h in steps],
           datetime.date(2026, 1, 15), want)

p = os.path.join(tmp, "valid_only.nc")
with netCDF4.Dataset(p, "w") as ds:
    horizontal(ds)
    ds.createDimension("leadtime", 5)
    ld = ds.createVariable("leadtime", "f8", ("leadtime",))
    ld.units, ld[:] = "h", np.arange(12, 12 + 5 * 24, 24)  # noon steps, no standard_name: duration units suffice
    vt = ds.createVariable("vt", "f8", ("leadtime",))
    vt.units, vt.calendar = "days since 2026-02-01", "noleap"
    vt[:] = np.arange(5) + 0.5 + 3
    z = ds.createVariable("zg", "f4", ("leadtime", "lat", "lon"))
    z.units, z.coordinates = "m", "vt"
    single = (5500 + 100 * rng.standard_normal((5, len(LAT), len(LON)))).astype(np.float32)
    z[:] = single
check_read("zg(leadtime, lat, lon), lead in hours, only a valid-time coordinate (noleap)", p, 0,
           [datetime.date(2026, 2, 4 + i) for i in range(5)], [12.0] * 5, datetime.date(2026, 2, 4), single)

def two_inits_bad_valid(q):
    """Two initialisations along `run` whose 2-D valid times disagree, for the second, with run + lead."""
    with netCDF4.Dataset(q, "w") as ds:
        horizontal(ds)
        ds.createDimension("run", 2)
        ds.createDimension("lead", 3)
        ld = ds.createVariable("lead", "i4", ("lead",))
        ld.units, ld.standard_name, ld[:] = "days", "forecast_period", [0, 1, 2]
        t = ds.createVariable("run", "f8", ("run",))
        t.units, t[:] = "days since 2026-01-01", [0, 1]
        vt = ds.createVariable("valid_time", "f8", ("run", "lead"))
        vt.units, vt[:] = "days since 2026-01-01", [[0, 1, 2], [2, 3, 4]]
        z = ds.createVariable("zg", "f4", ("run", "lead", "lat", "lon"))
        z.units, z.coordinates, z[:] = "m", "valid_time", np.full((2, 3, len(LAT), len(LON)), 5500.0, np.float32)


# ---- bad input: one clear message naming the file, exit code 3 (damaged/unreadable data)
for name, write, words in [
        ("no_units.nc", lambda q: lead_days_file(q, init, leads, 3, field, lead_units=""), ["lead", "no units"]),
        ("disagree.nc", lambda q: lead_days_file(q, init, leads, 3, field, valid_shift_hours=6), ["disagrees"]),
        ("two_inits.nc", two_inits_bad_valid, ["valid time 0 of initialisation 1", "disagrees"])]:
    q = os.path.join(tmp, name)
    write(q)
    r = run([BIN, "inspect", q])
    msg = r.stderr.strip()
    check(r.returncode != 0 and q in msg and all(w in msg for w in words),
          f"{name}: refused (exit {r.returncode}): {msg[-220:]}")

# ---- classify: the same probabilities from the small world's forecasts in the demo layout and in two lead layouts
world, _, model = small_world_model(tmp)
originals = sorted(glob.glob(f"{world}/forecasts/*.nc"))[:3]
layouts = {"lead_days": [], "step_hours": [], "six_hourly": []}
for path in originals:
    with netCDF4.Dataset(path) as ds:
        var = next(v for v in ds.variables.values() if v.ndim == 4)
        values = np.asarray(var[:], np.float32)  # (number, time, lat, lon) in metres
        tv = ds["time"]
        dates = netCDF4.num2date(tv[:], tv.units, tv.calendar)
        lat, lon = np.asarray(ds["latitude"][:]), np.asarray(ds["longitude"][:])
        cal = tv.calendar
    first = datetime.datetime(dates[0].year, dates[0].month, dates[0].day)
    n = values.shape[1]
    for layout in layouts:
        out = os.path.join(tmp, layout, os.path.basename(path))
        os.makedirs(os.path.dirname(out), exist_ok=True)
        with netCDF4.Dataset(out, "w") as ds:
            ds.createDimension("y", len(lat))
            ds.createDimension("x", len(lon))
            v = ds.createVariable("y", "f4", ("y",))
            v.units, v[:] = "degrees_north", lat
            v = ds.createVariable("x", "f4", ("x",))
            v.units, v[:] = "degrees_east", lon
            ds.createDimension("ens", values.shape[0])
            e = ds.createVariable("ens", "i4", ("ens",))
            e.standard_name, e[:] = "realization", np.arange(values.shape[0])
            if layout == "lead_days":
                ds.createDimension("fp", n)
                f = ds.createVariable("fp", "i4", ("fp",))
                f.units, f.standard_name, f[:] = "days", "forecast_period", np.arange(n)
                r = ds.createVariable("frt", "f8", ())
                r.standard_name, r.units, r.calendar = "forecast_reference_time", "days since 2000-01-01", cal
                r[...] = netCDF4.date2num(first, r.units, cal)
                z = ds.createVariable("height", "f4", ("ens", "fp", "y", "x"))
                z[:] = values
            else:
                # step_hours: one step a day; six_hourly: each day's value at 00, 06, 12 and 18 UTC (so its daily
                # mean is the day's value) and a last step at 00 UTC after the last day (an incomplete day: left out)
                per = 1 if layout == "step_hours" else 4
                hours = np.arange(n * per) * (24 // per)
                if per > 1:
                    hours = np.append(hours, n * 24)
                ds.createDimension("t0", 1)
                ds.createDimension("st", len(hours))
                t0 = ds.createVariable("t0", "f8", ("t0",))
                t0.units, t0.calendar, t0[:] = "hours since 2000-01-01", cal, \
                    [netCDF4.date2num(first, "hours since 2000-01-01", cal)]
                st = ds.createVariable("st", "i8", ("st",))
                st.units, st[:] = "hours", hours
                z = ds.createVariable("height", "f4", ("t0", "st", "ens", "y", "x"))
                by_step = np.repeat(np.transpose(values, (1, 0, 2, 3)), per, axis=0)
                if per > 1:
                    by_step = np.concatenate([by_step, by_step[-1:] + 500.0])  # far off: it must not be used
                z[:] = by_step[None]
            z.units, z.standard_name = "m", "geopotential_height"
        layouts[layout].append(out)


def probabilities(files, name):
    out = os.path.join(tmp, name + ".json")
    r = run([BIN, "classify", "--quiet", "--model", model, "--forecasts", *files, "--lag", "3", "--out", out])
    assert r.returncode == 0, r.stderr
    g = json.load(open(out))
    return g, np.array([[d["probabilities"][s] for s in sorted(d["probabilities"])] for d in g["daily"]])


g0, p0 = probabilities(originals, "originals")
for layout, files in layouts.items():
    g1, p1 = probabilities(files, layout)
    same = p0.shape == p1.shape and [d["valid_date"] for d in g0["daily"]] == [d["valid_date"] for d in g1["daily"]]
    diff = np.abs(p0 - p1).max() if same else float("inf")
    check(same and diff <= 1e-6, f"classify on the {layout} layout (lag 3): the same {p0.shape[0]} daily "
          f"probabilities as on the demo layout (max difference {diff:.1e})")



def stacked(files, out, init_dim):
    """The files' forecasts stacked along an initialisation dimension `init_dim` (its coordinate the
    initialisations in days since 2000-01-01, the files' calendar) beside a lead `lead` in whole days, with a
    2-D valid_time(init_dim, lead) named in `coordinates`."""
    values, inits, cal = [], [], None
    for path in files:
        with netCDF4.Dataset(path) as ds:
            var = next(v for v in ds.variables.values() if v.ndim == 4)
            values.append(np.asarray(var[:], np.float32))
            tv = ds["time"]
            cal = tv.calendar
            d = netCDF4.num2date(tv[0], tv.units, cal)
            inits.append(netCDF4.date2num(datetime.datetime(d.year, d.month, d.day), "days since 2000-01-01", cal))
            lat, lon = np.asarray(ds["latitude"][:]), np.asarray(ds["longitude"][:])
    n = values[0].shape[1]
    with netCDF4.Dataset(out, "w") as ds:
        for name, axis, units in (("y", lat, "degrees_north"), ("x", lon, "degrees_east")):
            ds.createDimension(name, len(axis))
            v = ds.createVariable(name, "f4", (name,))
            v.units, v[:] = units, axis
        ds.createDimension(init_dim, len(files))
        ds.createDimension("lead", n)
        ds.createDimension("number", values[0].shape[0])
        t = ds.createVariable(init_dim, "f8", (init_dim,))
        t.units, t.calendar, t.standard_name, t[:] = "days since 2000-01-01", cal, "forecast_reference_time", inits
        ld = ds.createVariable("lead", "i4", ("lead",))
        ld.units, ld[:] = "days", np.arange(n)
        vt = ds.createVariable("valid_time", "f8", (init_dim, "lead"))
        vt.units, vt.calendar, vt[:] = "days since 2000-01-01", cal, np.add.outer(inits, np.arange(n))
        nb = ds.createVariable("number", "i4", ("number",))
        nb.standard_name, nb[:] = "realization", np.arange(values[0].shape[0])
        z = ds.createVariable("gh", "f4", (init_dim, "number", "lead", "y", "x"))
        z.units, z.coordinates, z[:] = "m", "valid_time", np.stack(values)


# Several initialisations in one file: the three forecasts along `init` beside the lead.
multi = os.path.join(tmp, "multi.nc")
stacked(originals, multi, "init")
g1, p1 = probabilities([multi], "multi")
diff = np.abs(p0 - p1).max() if p0.shape == p1.shape else float("inf")
check(diff <= 1e-6, f"three initialisations in one file (init, number, lead, y, x) with a 2-D valid_time: the same "
      f"probabilities as three files (max difference {diff:.1e})")

# Hindcasts: the reforecasts of each day of the year in one file, the past years along `hdate`; the drift from
# them equals the drift from one file per reforecast.
by_day = {}
for path in sorted(glob.glob(f"{world}/reforecasts/*.nc")):
    by_day.setdefault(os.path.basename(path)[7:11], []).append(path)  # rf_YYYYMMDD.nc: by month and day
hind = os.path.join(tmp, "hindcasts")
os.makedirs(hind)
for md, files in by_day.items():
    stacked(files, os.path.join(hind, f"hc_{md}.nc"), "hdate")
outs = {}
for name, refs in (("rf_files", f"{world}/reforecasts/*.nc"), ("rf_hindcast", f"{hind}/*.nc")):
    out = os.path.join(tmp, name + ".json")
    r = run([BIN, "classify", "--quiet", "--model", model, "--forecasts", *originals, "--reforecasts", refs, "--lag",
             "3", "--out", out])
    assert r.returncode == 0, r.stderr
    g = json.load(open(out))
    outs[name] = np.array([[d["probabilities"][s] for s in sorted(d["probabilities"])] for d in g["daily"]])
diff = np.abs(outs["rf_files"] - outs["rf_hindcast"]).max()
check(diff <= 1e-6, f"{len(by_day)} hindcast files (years along 'hdate', {len(glob.glob(world + '/reforecasts/*.nc'))} "
      f"reforecasts in all) give the drift-corrected guidance of one file per reforecast (max difference {diff:.1e})")

# A day short of its sub-daily steps before the last: refused, naming the file and the day.
bad = os.path.join(tmp, "gap.nc")
with netCDF4.Dataset(layouts["six_hourly"][-1]) as src, netCDF4.Dataset(bad, "w") as ds:
    for name, dim in src.dimensions.items():
        ds.createDimension(name, len(dim) - (1 if name == "st" else 0))
    for name, v in src.variables.items():
        w = ds.createVariable(name, v.dtype, v.dimensions)
        w.setncatts({a: v.getncattr(a) for a in v.ncattrs()})
        data = v[:]
        if "st" in v.dimensions:  # drop 12 UTC of lead day 3
            data = np.delete(data, 3 * 4 + 2, axis=v.dimensions.index("st"))
        w[:] = data
r = run([BIN, "classify", "--quiet", "--model", model, "--forecasts", *layouts["six_hourly"][:-1], bad, "--lag", "3",
         "--out", os.path.join(tmp, "gap.json")])
check(r.returncode != 0 and bad in r.stderr and "lead day 3" in r.stderr and "3 of the 4" in r.stderr
      and not os.path.exists(os.path.join(tmp, "gap.json")),
      f"a lead day with 3 of its 4 six-hourly steps is refused, no output: {r.stderr.strip()[-200:]}")
finish()
