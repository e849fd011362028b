#!/usr/bin/env bash
# How the committed seeds of fuzz_report, fuzz_merge and fuzz_curve, and the
# long sidecars of fuzz_operating_point, were made. The seeds are committed
# bytes; rerun this only to change them on purpose.
#
#   tests/fuzz/make_corpus_documents.sh [BUILD_DIR]      (default: build)
#
# Needs the demo's outputs (tools/demo.sh BUILD_DIR) and python3.
# corpus/report/          the demo's findings and comparison, one-line copies, and
#                         edits: short or empty arrays, zero, negative and falling
#                         frequencies, missing keys, arrays past the report's limits;
#                         the demo route's summary (fuzz_report's route mode).
# corpus/merge/           the demo route's summary.jsonl (whole and cut in two shards),
#                         a failed row, a row without a finding, and a route.json of
#                         its own after a line "%%route.json%%" (see fuzz_merge.cpp).
# corpus/curve/           the samples' NPSH3 curves and hand-made ones.
# corpus/operating_point/ long sidecars: 60 kB of dotted keys, deep brackets, a long
#                         string, long lines.
# Seeds named regression_* are reproducers of bugs the fuzzers found: kept as they are.
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)"
cd "$root"
build="${1:-build}"
demo="$build/demo"
[[ -f "$demo/compare-OW-P101.json" && -f "$demo/route/summary.jsonl" ]] ||
    { echo "make_corpus_documents.sh: no demo outputs in $demo; run tools/demo.sh $build first" >&2; exit 1; }

corpus=tests/fuzz/corpus
mkdir -p "$corpus/report" "$corpus/merge" "$corpus/curve" "$corpus/operating_point"
for kind in report merge curve; do find "$corpus/$kind" -type f ! -name 'regression_*' -delete; done
find "$corpus/operating_point" -type f -name 'long_*' -delete

python3 - "$demo" "$corpus" <<'PY'
import copy, json, sys
demo, corpus = sys.argv[1], sys.argv[2]
rep = corpus + "/report/"

def load(p):
    with open(p) as f:
        return json.load(f)

def save(name, doc, compact=False):
    with open(rep + name, "w") as f:
        f.write(json.dumps(doc, separators=(",", ":")) if compact else json.dumps(doc, indent=1))

developed = load(demo + "/route/findings/L000007_OW-P102_DE-H.json")  # P102 on 2026-10-05
normal = load(demo + "/route/findings/L000002_OW-P101_DE-H.json")
compare = load(demo + "/compare-OW-P101.json")
save("finding_developed.json", developed)
save("finding_normal_compact.json", normal, True)
save("compare.json", compare)
save("compare_compact.json", compare, True)

def edit(name, doc, fn, compact=True):
    d = copy.deepcopy(doc)
    fn(d)
    save(name, d, compact)

sp = lambda d: d["plots"]["spectrum"]
edit("finding_short_level_db.json", normal, lambda d: sp(d).update(level_db=sp(d)["level_db"][:3]))
edit("finding_empty_level_db.json", normal, lambda d: sp(d).update(level_db=[]))
edit("finding_zero_frequency.json", normal, lambda d: sp(d)["center_hz"].__setitem__(0, 0.0))
edit("finding_negative_frequency.json", normal, lambda d: sp(d)["center_hz"].__setitem__(1, -25.0))
edit("finding_falling_frequency.json", normal, lambda d: sp(d)["center_hz"].reverse())
edit("finding_no_plots.json", normal, lambda d: d.pop("plots"))
edit("finding_no_quality.json", normal, lambda d: d.pop("quality"))
edit("finding_no_kurtogram_rows.json", normal, lambda d: d["plots"]["kurtogram"].pop("rows"))
edit("finding_kurtogram_row_5000.json", normal,
     lambda d: d["plots"]["kurtogram"]["rows"][0].update(mean=[1.5] * 5000))
edit("finding_kurtogram_40_rows.json", normal,
     lambda d: d["plots"]["kurtogram"].update(rows=[{"level": 1, "bandwidth_hz": 100.0, "mean": [2.0]}] * 40))
edit("finding_envelope_shaft_tiny.json", normal,
     lambda d: d["plots"]["envelope_spectrum"].update(shaft_hz=1e-9))
edit("finding_envelope_bin_zero.json", normal, lambda d: d["plots"]["envelope_spectrum"].update(bin_hz=0))
edit("finding_level_strings.json", normal, lambda d: sp(d).update(level_db=[str(x) for x in sp(d)["level_db"]]))
edit("finding_huge_levels.json", normal, lambda d: sp(d).update(level_db=[1e300] * len(sp(d)["level_db"])))
edit("finding_verdict_number.json", normal, lambda d: d.update(verdict=3))
edit("finding_evidence_markup.json", normal,
     lambda d: d.update(evidence=["<script>alert(1)</script>", "a & b < c"]))
wf = lambda d: d["plots"]["waveform"]
edit("finding_waveform_9000.json", normal, lambda d: wf(d).update(raw=[0.1] * 9000, hf=[0.1] * 9000))
edit("finding_waveform_text.json", normal, lambda d: wf(d).update(hf="0.1 0.2", sample_rate_hz="fast"))
edit("finding_waveform_null_value.json", normal, lambda d: wf(d)["raw"].__setitem__(1, None))
edit("finding_waveform_unequal.json", normal, lambda d: wf(d).update(hf=wf(d)["hf"][:7]))
edit("finding_waveform_rate_zero.json", normal, lambda d: wf(d).update(sample_rate_hz=0))
edit("finding_waveform_huge.json", normal, lambda d: wf(d).update(raw=[1e300] * len(wf(d)["raw"]), start_s=1e300))
edit("compare_no_plots.json", compare, lambda d: d.pop("plots"))
edit("compare_segments_empty.json", compare, lambda d: d["plots"].update(hf_segments_db={"before": [], "after": []}))
edit("compare_short_after_db.json", compare, lambda d: d["plots"].update(after_db=d["plots"]["after_db"][:5]))
edit("compare_no_indicators.json", compare, lambda d: d.update(indicators=[]))
with open(rep + "schema_only_finding.json", "w") as f:
    f.write('{"schema":"cavitas.finding/1"}')
with open(rep + "schema_only_compare.json", "w") as f:
    f.write('{"schema":"cavitas.compare/1"}')

# report, route mode: the demo route's summary with "schema" first (fuzz_report.cpp)
def schema_first(line):
    d = json.loads(line)
    return json.dumps(dict([("schema", d.pop("schema"))] + list(d.items())), separators=(",", ":"))
with open(demo + "/route/summary.jsonl") as f:
    route_rows = [schema_first(l) for l in f.read().splitlines()]
with open(rep + "route_summary_7_rows.jsonl", "w") as f:
    f.write("\n".join(route_rows) + "\n")

# merge: summary lines (with the harness's route.json, or one of their own)
mg = corpus + "/merge/"
with open(demo + "/route/summary.jsonl") as f:
    lines = f.read().splitlines()
def write(name, text):
    with open(mg + name, "w") as f:
        f.write(text)
write("summary_7_rows.jsonl", "\n".join(lines) + "\n")
write("summary_shard_1_of_2.jsonl", "\n".join(lines[0::2]) + "\n")
write("summary_one_row.jsonl", lines[0] + "\n")
# The fewest keys a row needs: the finding's path is a larger share of the input to mutate.
write("summary_minimal_row.jsonl", json.dumps({"schema": "cavitas.route-row/1", "line": 2, "verdict": "normal",
                                               "finding": "findings/L000002_OW-P101_DE-H.json"},
                                              separators=(",", ":")) + "\n")
row = json.loads(lines[1])
row.update(verdict="error", reason="not a readable recording", finding="")
write("summary_failed_row.jsonl", lines[0] + "\n" + json.dumps(row, separators=(",", ":")) + "\n")
row = json.loads(lines[2])
row.pop("finding")
write("summary_no_finding.jsonl", json.dumps(row, separators=(",", ":")) + "\n")
run = {"schema": "cavitas.route/1", "manifest": "route.csv", "manifest_sha256": "00", "manifest_rows": 2,
       "extra_columns": ["role"], "shard": "1/2", "baselines": "baselines", "store": None}
write("with_route_json.jsonl", lines[0] + "\n" + lines[1] + "\n%%route.json%%\n" + json.dumps(run, indent=1) + "\n")
run.update(shard="2/0", manifest_rows="two")
write("with_route_json_odd.jsonl", lines[0] + "\n%%route.json%%\n" + json.dumps(run) + "\n")
PY

cp samples/OW-P101.npsh3.csv "$corpus/curve/OW-P101.npsh3.csv"
cp samples/OW-P102.npsh3.csv "$corpus/curve/OW-P102.npsh3.csv"
printf 'flow [gpm], npsh3 [ft]\r\n0, 6\r\n400, 8\r\n800, 14\r\n' > "$corpus/curve/us_crlf.csv"
printf '\xEF\xBB\xBFflow [l/s], npsh3 [m]\n10, 1.5\n20, 1.9\n' > "$corpus/curve/bom_litres.csv"
printf 'flow [m3/h], npsh3 [m]\n# comment\n\n100, 2\n100, 3\n' > "$corpus/curve/repeated_flow.csv"
printf 'flow [m3/h], npsh3 [m]\n100, 2\n50, 3\n' > "$corpus/curve/falling_flow.csv"
printf 'flow [m3/h], npsh3 [m]\n1e308, 2\n1.7e308, 3\n' > "$corpus/curve/huge_flow.csv"
printf 'flow [m3/h], npsh3 [m]\n0.0000001, 0.0000001\n0.0000002, 1e-300\n' > "$corpus/curve/tiny_values.csv"
printf 'flow [m3/h]; npsh3 [m]\n100; 2\n' > "$corpus/curve/semicolons.csv"
printf 'npsh3 [m], flow [m3/h]\n2, 100\n3, 200\n' > "$corpus/curve/columns_swapped.csv"

# Long sidecars (fuzz_operating_point runs with -max_len=65536, run.sh).
op="$corpus/operating_point"
python3 - "$op" <<'PY'
import sys
op = sys.argv[1] + "/"
def write(name, text):
    assert len(text.encode()) <= 65536, name
    with open(op + name, "w") as f:
        f.write(text)
lines, i = [], 0
while sum(len(l) for l in lines) < 60000:
    lines.append("a%d.b.c.d.e.f.g.h = \"%d kPa\"\n" % (i, i)); i += 1
write("long_dotted_keys.toml", "".join(lines))
write("long_deep_brackets.toml", "x = " + "[" * 16 + "1" + "]" * 16 + "\ny = " + "{a = " * 15 + "1" + "}" * 15 + "\n")
write("long_string.toml", 'suction_pressure = "35 kPa"\nnote = "' + "cavitation " * 5900 + '"\n')
write("long_line.toml", 'flow = "' + "1" * 60000 + ' m3/h"\ntemperature = "14 C"\n')
write("long_many_keys.toml", "".join('k%d = "%d"\n' % (k, k) for k in range(4000)))
write("long_multiline_string.toml", 'note = """\n' + "line of a note\n" * 4000 + '"""\nflow = "410 m3/h"\n')
PY
# An acoustic NPSH test of a generated sweep (inception --json) and a finding
# judged against a sister machine's baseline (analyze --reference).
sweep="$(mktemp -d)"
"$build/tools/synth/cavitas-synth" sweep "$sweep" --npshi 6 > /dev/null
"$build/cavitas" inception "$sweep/SWEEP.csv" --json "$sweep/inception.json" > /dev/null 2>&1
python3 -c 'import json,sys; json.dump(json.load(open(sys.argv[1])), open(sys.argv[2], "w"), separators=(",", ":"))' \
    "$sweep/inception.json" "$corpus/report/inception.json"
"$build/cavitas" analyze --reference "$demo/baselines/OW-P101/DE-H.json" --machine OW-P109 --analyst "R. Okafor" \
    --json "$sweep/sister.json" samples/OW-P101_2026-11-02.wav > /dev/null 2>&1
python3 - "$sweep/sister.json" "$corpus/report/finding_sister.json" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
def cut(o):  # plots' arrays to 400 values: the seed stays under fuzz_report's max_len
    for k, v in (o.items() if isinstance(o, dict) else []):
        if isinstance(v, list) and len(v) > 400: o[k] = v[:400]
        else: cut(v)
cut(d["plots"])
d["provenance"]["host"] = "demo-host"
json.dump(d, open(sys.argv[2], "w"), separators=(",", ":"))
PY
rm -rf "$sweep"
chmod 644 "$corpus"/report/* "$corpus"/merge/* "$corpus"/curve/* "$op"/long_*
ls -l "$corpus/report" "$corpus/merge" "$corpus/curve" "$op"
