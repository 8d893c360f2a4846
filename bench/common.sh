# Shared by the benchmark scripts (sourced, from the project root, after
# BUILD is set): GNU time, the build, and reading /usr/bin/time -v's reports.
# `timed` writes into $R, which the script sets before calling it.

if [[ ! -x /usr/bin/time ]]; then
  echo "== installing GNU time (Debian package 'time') for wall time and peak RSS"
  apt-get install -y time >/dev/null
fi
if [[ ! -x "$BUILD/isohypse" || ! -x "$BUILD/isohypse-demo-world" ]]; then
  echo "== building isohypse in $BUILD/"
  cmake -S . -B "$BUILD" -DCMAKE_BUILD_TYPE=Release >/dev/null
  cmake --build "$BUILD" -j2 --target isohypse isohypse-demo-world
fi

timed() {  # timed NAME COMMAND...: /usr/bin/time -v's report goes to $R/NAME.time
  local name=$1
  shift
  /usr/bin/time -v -o "$R/$name.time" "$@"
}
field() {  # field FILE LABEL: a value from /usr/bin/time -v's report
  grep -F "$2" "$1" | sed 's/.*: //'
}
cpu() {  # cpu FILE: user + system seconds (the wall time means little on a shared machine)
  echo "$(field "$1" "User time (seconds)") $(field "$1" "System time (seconds)")" | awk '{ print $1 + $2 }'
}
seconds() {  # h:mm:ss or m:ss.ss -> seconds
  echo "$1" | awk -F: '{ s = 0; for (i = 1; i <= NF; i++) s = s * 60 + $i; print s }'
}
