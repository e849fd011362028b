#!/usr/bin/env bash
# The demo: the invented Orrin Weir pumping station of the Lowmere Water Trust.
#   tools/demo.sh [BUILD_DIR]        (default: build)
#
#  0. says what the recordings that are not WAV files hold (OW-P101's triaxial point NDE-T:
#     UFF 58b in volts, a MATLAB file, a CSV waveform in m/s^2), a line each;
#  1. learns each machine point's baseline from its known-good recordings
#     (samples/baselines.csv, with the channels and calibration its columns give) into a
#     baseline library BUILD_DIR/demo/baselines/MACHINE/POINT.json;
#  2. analyses the route (samples/route.csv: three dated visits of OW-P101, a visit after
#     its repair, its triaxial point NDE-T before and after the repair, the other pumps,
#     and an event row recording the repair of 2026-11-04) on all cores, with the history
#     in BUILD_DIR/demo/baselines/history.sqlite;
#  3. lists OW-P101's events, shows its trend judged from the repair on (the visits
#     before it are listed, not judged) and compares the visits either side of it;
#  4. writes work-order reports (HTML and PDF) to BUILD_DIR/demo/reports/;
#  5. works out the NPSH of OW-P101 on the day of its developed finding.
#  6. exports the route's work requests for a maintenance system (CSV and JSON).
# Each recording's operating point is in NAME.op.toml beside it (read by cavitas itself).
# Starts from an empty BUILD_DIR/demo/ every time, so the output is the same on every run.
set -euo pipefail
here=$(cd "$(dirname "$0")/.." && pwd)
build=${1:-build}
case "$build" in /*) ;; *) build="$PWD/$build" ;; esac
cd "$here"
cavitas="$build/cavitas"
[ -x "$cavitas" ] || cavitas="$build/src/cavitas"
[ -x "$cavitas" ] || { echo "demo: cavitas not found in $build (build it first)" >&2; exit 1; }
samples="samples"
out="${build#"$here"/}/demo"
lib="$out/baselines"
rm -rf "$out"
mkdir -p "$lib"

# Column NAME of a CSV row, by the header's names (a quoted cell may hold commas: "0,1,2";
# an absent column gives empty cells).
col() {
  awk -v name="$1" '
    function cells(line, out,   n, i, ch, f, q) {
      n = 0; f = ""; q = 0
      for (i = 1; i <= length(line); i++) {
        ch = substr(line, i, 1)
        if (q) { if (ch == "\"") { if (substr(line, i + 1, 1) == "\"") { f = f ch; i++ } else q = 0 } else f = f ch }
        else if (ch == "\"") q = 1
        else if (ch == ",") { out[++n] = f; f = "" }
        else f = f ch
      }
      out[++n] = f
      return n
    }
    { n = cells($0, f) }
    NR == 1 { for (i = 1; i <= n; i++) c[f[i]] = i; next }
    { print ((name in c) ? f[c[name]] : "") }' "$2"
}

echo "== 0. what the recordings that are not WAV files hold"
col file "$samples/manifest.csv" | grep -v '\.wav$' | while read -r f; do
  info=$("$cavitas" info "$samples/$f")
  first=${info%%$'\n'*}
  rest=${info#*$'\n'}
  channel0=${rest%%$'\n'*}
  echo "$first;${channel0# }"
done
echo

echo "== 1. baselines from the known-good recordings ($samples/baselines.csv)"
b="$samples/baselines.csv"
paste -d'|' <(col machine "$b") <(col point "$b") | sort -u |
while IFS='|' read -r machine point; do
  # The channels and calibration come from the point's first row; only non-empty cells become options.
  rows=$(paste -d'|' <(col machine "$b") <(col point "$b") <(col file "$b") <(col rpm "$b") <(col vanes "$b") \
                     <(col channel "$b") <(col full_scale "$b") <(col sensitivity "$b") <(col gain "$b") \
                     <(col unit "$b") <(col variable "$b") <(col sample_rate_hz "$b") |
         awk -F'|' -v m="$machine" -v p="$point" '$1 == m && $2 == p')
  mapfile -t files < <(awk -F'|' -v d="$samples" '{ print d "/" $3 }' <<< "$rows")
  IFS='|' read -r _ _ _ rpm vanes channel full_scale sensitivity gain unit variable rate <<< "$(head -n 1 <<< "$rows")"
  opts=()
  [ -z "$channel" ] || opts+=(--channel "$channel")
  [ -z "$full_scale" ] || opts+=(--full-scale "$full_scale")
  [ -z "$sensitivity" ] || opts+=(--sensitivity "$sensitivity")
  [ -z "$gain" ] || opts+=(--gain "$gain")
  [ -z "$unit" ] || opts+=(--unit "$unit")
  [ -z "$variable" ] || opts+=(--variable "$variable")
  [ -z "$rate" ] || opts+=(--sample-rate "$rate")
  mkdir -p "$lib/$machine"
  "$cavitas" baseline --machine "$machine" --rpm "$rpm" --vanes "$vanes" "${opts[@]}" \
    -o "$lib/$machine/$point.json" "${files[@]}"
  echo
done

echo "== 2. the route ($samples/route.csv)"
"$cavitas" route "$samples/route.csv" --baselines "$lib" --out "$out/route"
echo

echo "== 3. OW-P101 over time, split at its repair of 2026-11-04, and the visits either side of it"
"$cavitas" event OW-P101 --list --baselines "$lib"
"$cavitas" trend OW-P101 DE-H --baselines "$lib" --json "$out/trend-OW-P101.json"
"$cavitas" compare --around-event 2026-11-04 --machine OW-P101 --point DE-H --baselines "$lib" \
  --json "$out/compare-OW-P101.json"
echo

echo "== 4. work-order reports (HTML and PDF) of the route, of the repair and of OW-P102's finding"
mkdir -p "$out/reports"
"$cavitas" report "$out/route" --html "$out/reports/route.html" --pdf "$out/reports/route.pdf" \
  --work-order WO-2611-0040 --site "Orrin Weir pumping station" --analyst "R. Okafor"
"$cavitas" report "$out/compare-OW-P101.json" --html "$out/reports/repair-OW-P101.html" \
  --pdf "$out/reports/repair-OW-P101.pdf" --work-order WO-2611-0041 --site "Orrin Weir pumping station" \
  --analyst "R. Okafor" --point DE-H --date "2026-11-02 / 2026-11-09"
"$cavitas" report "$out/route/findings/L000007_OW-P102_DE-H.json" --html "$out/reports/finding-OW-P102.html" \
  --pdf "$out/reports/finding-OW-P102.pdf" --work-order WO-2610-0037 --site "Orrin Weir pumping station" \
  --analyst "R. Okafor" --point DE-H --date 2026-10-05
echo

echo "== 5. NPSH of OW-P101 on the day of its developed finding (from the recording's sidecar)"
"$cavitas" npsh --operating-point "$samples/OW-P101_2026-11-02.op.toml" --json "$out/npsh-OW-P101_2026-11-02.json"
echo

echo "== 6. work requests for a maintenance system: each point's latest actions, worst point first"
"$cavitas" export "$out/route" --work-requests "$out/work-requests.csv"
"$cavitas" export "$out/route" --work-requests "$out/work-requests.json"
echo
echo "demo outputs in $out/ (baselines, route summary and findings, trend, comparison, reports, NPSH, work requests)"
echo "open $out/reports/route.html in a browser to see which pump to look at first, and why"
