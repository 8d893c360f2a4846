"""Reading /usr/bin/time -v reports, shared by the benchmark scripts."""


def gnu_time(path):
    """Wall and CPU (user + system) seconds and peak RSS (MB) from a /usr/bin/time -v report."""
    v = {}
    with open(path) as f:
        for line in f:
            key, _, value = line.strip().rpartition(": ")
            v[key] = value
    wall = 0.0
    for part in v["Elapsed (wall clock) time (h:mm:ss or m:ss)"].split(":"):
        wall = wall * 60 + float(part)
    cpu = float(v["User time (seconds)"]) + float(v["System time (seconds)"])
    return wall, cpu, float(v["Maximum resident set size (kbytes)"]) / 1024
