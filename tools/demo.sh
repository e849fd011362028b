#!/usr/bin/env bash
# The demo route: learn each machine's baseline from its known-good recordings
# in samples/, then judge every other recording against it.
#   tools/demo.sh [BUILD_DIR]        (default: build)
# Reads samples/manifest.csv (file,machine,role,label,kind,rpm,vanes,fs_hz,duration_s,full_scale_g,seed);
# each recording's operating point is in NAME.op.toml beside it (read by
# cavitas itself), each pump's NPSH3 curve in TAG.npsh3.csv.
# Writes baselines and JSON findings to BUILD_DIR/demo/.
set -euo pipefail
here=$(cd "$(dirname "$0")/.." && pwd)
build=${1:-build}
case "$build" in /*) ;; *) build="$PWD/$build" ;; esac
cd "$here"
cavitas="$build/cavitas"
[ -x "$cavitas" ] || cavitas="$build/src/cavitas"
[ -x "$cavitas" ] || { echo "demo: cavitas not found in $build (build it first)" >&2; exit 1; }
samples="samples"
manifest="$samples/manifest.csv"
out="${build#"$here"/}/demo"
mkdir -p "$out"

machines=$(awk -F, 'NR > 1 { print $2 }' "$manifest" | sort -u)
for m in $machines; do
  rpm=$(awk -F, -v m="$m" 'NR > 1 && $2 == m && $3 == "baseline" { print $6; exit }' "$manifest")
  vanes=$(awk -F, -v m="$m" 'NR > 1 && $2 == m && $3 == "baseline" { print $7; exit }' "$manifest")
  fsc=$(awk -F, -v m="$m" 'NR > 1 && $2 == m && $3 == "baseline" { print $10; exit }' "$manifest")
  mapfile -t good < <(awk -F, -v m="$m" -v d="$samples" 'NR > 1 && $2 == m && $3 == "baseline" { print d "/" $1 }' "$manifest")
  echo "== $m: learning the baseline from ${#good[@]} known-good recording(s)"
  "$cavitas" baseline --rpm "$rpm" --vanes "$vanes" --full-scale "${fsc}g" -o "$out/$m.baseline.json" "${good[@]}"
  echo
  while IFS=, read -r file machine role label kind rec_rpm _; do
    [ "$machine" = "$m" ] && [ "$role" = "test" ] || continue
    echo "-- $file  (demo label: $label, $kind)"
    "$cavitas" analyze --baseline "$out/$m.baseline.json" --rpm "$rec_rpm" \
      --json "$out/${file%.*}.finding.json" "$samples/$file"
    echo
  done < <(tail -n +2 "$manifest")
done
echo "== NPSH of OW-P101 on the day of its developed finding (from the recording's sidecar)"
"$cavitas" npsh --operating-point "$samples/OW-P101_developed.op.toml" --json "$out/OW-P101_developed.npsh.json"
echo
echo "findings written to $out/"
