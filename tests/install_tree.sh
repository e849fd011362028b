#!/usr/bin/env bash
# The installed cavitas works on its own: installs the build into a fresh
# prefix, then, from a folder outside the source and build trees, runs the
# installed executable: --version, a baseline and an analyze of the demo
# recordings, and a report (which must load the report module from the
# installed library folder, since none lies beside the installed executable);
# the module moved away, report must fail naming the places it looked.
# Checks the man page when the build made one.
#   install_tree.sh CMAKE BUILD_DIR SAMPLES_DIR WORK_DIR MODULE_DIR [MAN_PAGE]
# MODULE_DIR and MAN_PAGE are relative to the prefix.
set -euo pipefail
[ $# -ge 5 ] || { echo "usage: install_tree.sh CMAKE BUILD_DIR SAMPLES_DIR WORK_DIR MODULE_DIR [MAN_PAGE]" >&2; exit 2; }
cmake=$1 build=$2 samples=$3 work=$4 module_dir=$5 man_page=${6:-}
fail() { echo "FAIL: $*" >&2; exit 1; }

rm -rf "$work"
mkdir -p "$work/run"
prefix="$work/prefix"
"$cmake" --install "$build" --prefix "$prefix"

exe="$prefix/bin/cavitas"
module="$prefix/$module_dir/cavitas-report.so"
[ -x "$exe" ] || fail "no executable $exe"
[ -f "$module" ] || fail "no report module $module"
[ ! -e "$prefix/bin/cavitas-report.so" ] || fail "the report module is installed beside the executable"

cd "$work/run"   # nothing of cavitas here: the installed tree must find its own parts
version=$("$exe" --version)
echo "$version"
[[ "$version" =~ ^cavitas\ [0-9]+\.[0-9]+\.[0-9]+$ ]] || fail "--version printed '$version'"

"$exe" baseline --machine OW-P101 --rpm 1485 --vanes 7 --full-scale 50g -o P101.json \
  "$samples/OW-P101_baseline_1.wav" "$samples/OW-P101_baseline_2.wav"
[ -s P101.json ] || fail "baseline wrote no P101.json"
"$exe" analyze --baseline P101.json --json finding.json "$samples/OW-P101_2026-11-02.wav" > analyze.txt
cat analyze.txt
grep -q 'verdict  *DEVELOPED cavitation' analyze.txt || fail "analyze did not print the developed verdict"
grep -q '"verdict": *"developed"' finding.json || fail "finding.json does not hold the developed verdict"

"$exe" report finding.json --html finding.html --pdf finding.pdf --work-order WO-INSTALL-1
[ -s finding.html ] || fail "report wrote no HTML"
[ -s finding.pdf ] || fail "report wrote no PDF"
grep -q 'WO-INSTALL-1' finding.html || fail "the HTML report lacks its work order"
grep -qi 'developed' finding.html || fail "the HTML report lacks the verdict"
[ "$(head -c 5 finding.pdf)" = "%PDF-" ] || fail "finding.pdf is not a PDF"
echo "report: the module was loaded from $module_dir"

# Without the module, report fails with the places it looked, and writes nothing.
mv "$module" "$work/moved.so"
set +e
"$exe" report finding.json --html lone.html 2> lone.err
status=$?
set -e
mv "$work/moved.so" "$module"
cat lone.err
[ "$status" -eq 1 ] || fail "report without its module exited $status, not 1"
grep -qF "$prefix/bin/cavitas-report.so" lone.err || fail "the error does not name the executable's folder"
grep -qF "$module" lone.err || fail "the error does not name $module"
[ ! -e lone.html ] || fail "report without its module wrote lone.html"

if [ -n "$man_page" ]; then
  page="$prefix/$man_page"
  [ -f "$page" ] || fail "no man page $page"
  case "$page" in *.gz) text=$(gzip -dc "$page") ;; *) text=$(cat "$page") ;; esac
  grep -q '^\.TH CAVITAS "1"' <<< "$text" || fail "the man page has no .TH CAVITAS 1 header"
  grep -q '^\.SS "cavitas analyze' <<< "$text" || fail "the man page has no section for analyze"
  grep -qF "$version" <<< "$text" || fail "the man page does not carry the version ($version)"
  echo "man page: $man_page"
else
  echo "man page: not checked (help2man was not found when the build was configured)"
fi
echo "installed tree OK"
