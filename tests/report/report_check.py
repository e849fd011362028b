#!/usr/bin/env python3
"""Reports and JSON outputs, end to end, on the demo recordings.

Usage:
  report_check.py outputs CAVITAS SAMPLES SCHEMAS WORK
      builds baselines, runs a route (with a bad row), a comparison and single
      analyses (normal, incipient, developed, and indeterminate on a silent
      recording), validates every JSON output against its JSON Schema
      (src/schemas, draft 7, python3-jsonschema), writes the reports and checks
      that the HTML refers to nothing outside itself and that each PDF has the
      pages cavitas announced and carries the verdict and the cautions
      (pdfinfo, pdftotext from poppler-utils).
  report_check.py browser WORK
      loads each HTML report of WORK in headless Chromium (Debian's chromium):
      it must render (a screenshot of real content), log no console error, and
      print to PDF with the verdict in its text; laid out 1000 px wide, no word
      of a table cell or a list item may break across lines and the page may
      not scroll sideways (a copy of the page with a measuring script, whose
      result is read back from the DOM).

One line per check, then "N passed, M failed". Exit 0 all pass, 1 a failure,
77 when a tool is missing (jsonschema, poppler-utils, chromium).
"""

import hashlib
import json
import os
import re
import shutil
import struct
import subprocess
import sys
import wave
import zlib

PASSED = 0
FAILED = 0


def check(name, ok, detail=""):
    global PASSED, FAILED
    if ok:
        PASSED += 1
    else:
        FAILED += 1
    print(f"{'PASS' if ok else 'FAIL'}  {name}{'  (' + detail + ')' if detail and not ok else ''}")
    return ok


def run(args, **kw):
    return subprocess.run(args, capture_output=True, text=True, check=False, **kw)


def words(text):
    return re.sub(r"\s+", " ", text)


def broken_words(html, pdf_raw_text):
    """Words of the HTML's table cells and list items that the PDF splits inside ("develope d")."""
    cells = re.findall(r"<(?:td|th|li)[^>]*>(.*?)</(?:td|th|li)>", html, flags=re.S)
    vocabulary = set()
    for cell in cells:
        vocabulary.update(re.findall(r"\b[A-Za-z]{5,}\b", re.sub(r"<[^>]+>", "", cell)))
    text = words(pdf_raw_text)
    found = []
    for w in sorted(vocabulary):
        if any(re.search(rf"(?<![A-Za-z-]){re.escape(w[:k])} {re.escape(w[k:])}(?![A-Za-z-])", text)
               for k in range(2, len(w) - 1)):
            found.append(w)
    return found


def finish():
    print(f"{PASSED} passed, {FAILED} failed")
    return 1 if FAILED else 0


# ---------------------------------------------------------------------------------------------

def screening_checks(cavitas, site, work, validate, validator):
    """cavitas screen of demo recordings (no reference): the schema, the "screening" code scripts read,
    and a spoiled document refused."""
    expect = {"OW-P101_2026-09-07.wav": "no_sign", "OW-P101_2026-11-02.wav": "signs_of_cavitation"}
    for rec, code in expect.items():
        out = os.path.join(work, f"screening-{rec}.json")
        r = run([cavitas, "screen", "--rpm", "1485", "--vanes", "7", "--full-scale", "50g", "--json", out,
                 os.path.join(site, rec)])
        check(f"screen {rec}", r.returncode == 0, r.stderr)
        with open(out, encoding="utf-8") as f:
            doc = json.load(f)
        validate(validator, doc, f"screening of {rec}")
        check(f"screen {rec} reads {code} (samples/route.csv labels it {'normal' if code == 'no_sign' else 'developed'})",
              doc.get("screening") == code, str(doc.get("screening")))
    doc["screening"] = "developed"
    check("schema refuses a screening that claims a severity", len(list(validator.iter_errors(doc))) >= 1)


def export_checks(cavitas, site, lib, route, work, validate, validator):
    """cavitas export of ROUTE: the requests counted from its summary rows, the schema, the CSV read by
    Python's csv module (RFC 4180), SHA-256 by hashlib, dates by datetime, and a hostile note."""
    import csv
    import datetime
    with open(os.path.join(route, "summary.jsonl"), encoding="utf-8") as f:
        rows = [json.loads(line) for line in f if line.strip()]
    latest = {}  # each machine point and channel's latest visit, an analysed row over a failed one
    for row in rows:
        key = (row["machine"], row["point"], row["channel"])
        if key not in latest or (row["verdict"] != "error", row["datetime"]) > \
                (latest[key]["verdict"] != "error", latest[key]["datetime"]):
            latest[key] = row
    want = sorted((r["finding"], a["step"]) for r in latest.values() for a in r["actions"])
    want_failed = sum(r["verdict"] == "error" for r in latest.values())  # one request each
    out_csv, out_json = os.path.join(work, "work-requests.csv"), os.path.join(work, "work-requests.json")
    for out in (out_csv, out_json):
        r = run([cavitas, "export", route, "--work-requests", out])
        check(f"export --work-requests {os.path.basename(out)}", r.returncode == 0, r.stderr)
    with open(out_json, encoding="utf-8") as f:
        doc = json.load(f)
    validate(validator, doc, "work-requests.json")
    with open(out_csv, encoding="utf-8", newline="") as f:
        table = list(csv.DictReader(f))
    requests = doc.get("requests", [])
    analysed = [q for q in requests if q["verdict"] != "error"]
    check("every action of every point's latest visit is one request (JSON)",
          sorted((q["finding"], q["description"]) for q in analysed) == want, f"{len(analysed)} vs {len(want)}")
    check("... and each latest row that failed one", len(requests) - len(analysed) == want_failed)
    check("... and one CSV row, in the JSON's order", [t["request_id"] for t in table] == [q["request_id"] for q in requests])
    check("request ids are unique", len({q["request_id"] for q in requests}) == len(requests))
    for q in analysed:
        with open(os.path.join(route, q["finding"]), "rb") as f:
            sha = hashlib.sha256(f.read()).hexdigest()
        check(f"{q['request_id']}: finding_sha256 is hashlib's and the id is made of it",
              q["finding_sha256"] == sha and q["request_id"].startswith("WR-" + sha[:16] + "-"))
        due = datetime.date.fromisoformat(q["recorded"][:10]) + datetime.timedelta(days=q["recheck_days"])
        check(f"{q['request_id']}: recheck_by is the recorded date + recheck_days", q["recheck_by"] == due.isoformat())
    spoiled = json.loads(json.dumps(doc))
    if spoiled["requests"]:
        spoiled["requests"][0]["description"] = "two\nlines"
        spoiled["requests"][0]["priority_rank"] = 4 if spoiled["requests"][0]["priority"] != "watch" else 1
    check("schema refuses a request on two lines with a rank not its priority's",
          len(list(validator.iter_errors(spoiled))) >= 2)
    # A note with quotes, a comma, a line break and a leading "=" (a formula to a spreadsheet).
    note = '=1+2 "quoted", then\nsecond line'
    manifest = os.path.join(site, "route-hostile-note.csv")
    with open(manifest, "w", encoding="utf-8", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["file", "machine", "point", "channel", "datetime", "rpm", "vanes", "full_scale", "note"])
        w.writerow(["OW-P103_2026-09-07.wav", "OW-P103", "DE-H", "0", "2026-09-07T10:20:00", "985", "6", "50g", note])
    hostile = os.path.join(work, "route-hostile-note")
    r = run([cavitas, "route", manifest, "--baselines", lib, "--out", hostile, "--no-store"])
    check("route with a hostile note", r.returncode == 0, r.stderr)
    hostile_csv = os.path.join(work, "work-requests-hostile.csv")
    r = run([cavitas, "export", hostile, "--work-requests", hostile_csv])
    check("export of the route with a hostile note", r.returncode == 0, r.stderr)
    with open(hostile_csv, encoding="utf-8", newline="") as f:
        notes = [t["operator_note"] for t in csv.DictReader(f)]
    # OWASP CSV injection guidance: a cell starting with = + - @ gets a leading apostrophe.
    check("the note is one CSV cell on one line, behind an apostrophe (Python csv)",
          notes and all(n == "'" + note.replace("\n", " ") for n in notes), str(notes))


# ---------------------------------------------------------------------------------------------

def inception_checks(cavitas, work, reports, validate, validator):
    """cavitas inception on a sweep cavitas-synth writes (inception at 6 m): the JSON against its schema,
    the report made by the command and by 'report' from the JSON, and a schema that can fail."""
    synth = os.path.join(os.path.dirname(cavitas), "tools", "synth", "cavitas-synth")
    if not os.path.exists(synth):
        check("cavitas-synth is built beside cavitas (for the sweep)", False, synth)
        return
    sweep = os.path.join(work, "sweep")
    r = run([synth, "sweep", sweep, "--npshi", "6", "--seconds", "3"])
    check("cavitas-synth sweep", r.returncode == 0, r.stderr)
    out = os.path.join(work, "inception.json")
    html, pdf = os.path.join(reports, "inception.html"), os.path.join(reports, "inception.pdf")
    r = run([cavitas, "inception", os.path.join(sweep, "SWEEP.csv"), "--json", out, "--html", html, "--pdf", pdf])
    if not check("inception with --json, --html and --pdf", r.returncode == 0, r.stderr):
        return
    with open(out, encoding="utf-8") as f:
        doc = json.load(f)
    validate(validator, doc, "inception.json")
    check("the sweep's inception is found near 6 m (tools/synth/sweep.hpp)",
          isinstance(doc.get("npshi_m"), (int, float)) and abs(doc["npshi_m"] - 6.0) <= 0.5, str(doc.get("npshi_m")))
    spoiled = json.loads(json.dumps(doc))
    spoiled["npshi_m"] = None
    spoiled["located"] = "somewhere"
    check("schema refuses an inception without its reason and with an unknown location",
          len(list(validator.iter_errors(spoiled))) >= 2)
    text = words(run(["pdftotext", "-layout", pdf, "-"]).stdout)
    for what in ("Cavitation inception at NPSHa", "lock out and tag out", "ISO 9906", "NPSH3", "HF band level against NPSHa"):
        check(f"inception.pdf text shows '{what}'", what in text, what)
    with open(html, encoding="utf-8") as f:
        page = f.read()
    check("inception.html draws its chart inline and refers to nothing outside itself",
          "<svg" in page and not re.search(r"<script|<link|@import|file:", page, flags=re.I))
    again = os.path.join(reports, "inception-again.pdf")
    r = run([cavitas, "report", out, "--pdf", again])
    check("report reads the inception JSON", r.returncode == 0 and os.path.exists(again), r.stderr)
    del spoiled["steps"][0]["hf_level_db"]
    spoiled_path = os.path.join(work, "inception-spoiled.json")
    with open(spoiled_path, "w", encoding="utf-8") as f:
        json.dump(spoiled, f)
    r = run([cavitas, "report", spoiled_path, "--html", os.path.join(reports, "never-inception.html")])
    check("report refuses an inception JSON without a step's level, naming the field",
          r.returncode == 1 and "steps[0].hf_level_db" in r.stderr, r.stderr)


def outputs(cavitas, samples, schemas, work):
    try:
        import jsonschema
    except ImportError:
        print(f"SKIP: jsonschema cannot be imported by {sys.executable} (install python3-jsonschema)")
        return 77
    for tool in ("pdfinfo", "pdftotext"):
        if not shutil.which(tool):
            print(f"SKIP: {tool} not found (install poppler-utils)")
            return 77
    shutil.rmtree(work, ignore_errors=True)
    site = os.path.join(work, "site")
    shutil.copytree(samples, site)
    lib = os.path.join(work, "baselines")
    for machine, rpm, vanes in (("OW-P101", "1485", "7"), ("OW-P102", "2960", "5"), ("OW-P103", "985", "6")):
        os.makedirs(os.path.join(lib, machine), exist_ok=True)
        r = run([cavitas, "baseline", "--machine", machine, "--rpm", rpm, "--vanes", vanes, "--full-scale", "50g",
                 "-o", os.path.join(lib, machine, "DE-H.json"),
                 os.path.join(site, machine + "_baseline_1.wav"), os.path.join(site, machine + "_baseline_2.wav")])
        check(f"baseline {machine}", r.returncode == 0, r.stderr)
    # OW-P101's triaxial point NDE-T: UFF 58b files in volts, a 100 mV/g sensor (samples/baselines.csv).
    r = run([cavitas, "baseline", "--machine", "OW-P101", "--channel", "all", "--rpm", "1485", "--vanes", "7",
             "--sensitivity", "100mV/g", "-o", os.path.join(lib, "OW-P101", "NDE-T.json"),
             os.path.join(site, "OW-P101_NDE-T_baseline_1.uff"), os.path.join(site, "OW-P101_NDE-T_baseline_2.uff")])
    check("baseline OW-P101 NDE-T (three channels)", r.returncode == 0, r.stderr)

    # A silent recording: the quality gate must make it indeterminate.
    silent = os.path.join(site, "OW-P101_silent.wav")
    with wave.open(silent, "wb") as w:
        w.setnchannels(1)
        w.setsampwidth(2)
        w.setframerate(25600)
        w.writeframes(b"\0\0" * 25600 * 6)

    manifest = os.path.join(site, "route-with-bad-row.csv")
    # The demo route (WAV, UFF 58b, CSV and MATLAB recordings; a triaxial point) and a row that fails.
    with open(os.path.join(site, "route.csv"), encoding="utf-8") as f:
        text = f.read()
    with open(manifest, "w", encoding="utf-8") as f:
        f.write(text + "OW-P101_gone.wav,OW-P101,DE-H,0,2026-11-16T08:00,1485,7,50g,test,normal,healthy,25600,8,9,,,,,\n")
    route = os.path.join(work, "route")
    r = run([cavitas, "route", manifest, "--baselines", lib, "--out", route, "--analyst", "R. Okafor"])
    check("route exits 1 (one row fails, the others are analysed)", r.returncode == 1, r.stderr)

    compare = os.path.join(work, "compare.json")
    r = run([cavitas, "compare", "--baseline", os.path.join(lib, "OW-P101", "DE-H.json"),
             "--before", os.path.join(site, "OW-P101_2026-11-02.wav"),
             "--after", os.path.join(site, "OW-P101_2026-11-09.wav"), "--json", compare])
    check("compare", r.returncode == 0, r.stderr)
    # The same comparison picked from the store around OW-P101's repair (the event row of samples/route.csv).
    compare_event = os.path.join(work, "compare-event.json")
    r = run([cavitas, "compare", "--around-event", "2026-11-04", "--machine", "OW-P101", "--point", "DE-H",
             "--baselines", lib, "--json", compare_event])
    check("compare --around-event", r.returncode == 0, r.stderr)

    findings = {}
    for verdict, rec in (("normal", "OW-P101_2026-09-07.wav"), ("incipient", "OW-P101_2026-10-05.wav"),
                         ("developed", "OW-P101_2026-11-02.wav"), ("indeterminate", "OW-P101_silent.wav")):
        out = os.path.join(work, f"finding-{verdict}.json")
        r = run([cavitas, "analyze", "--baseline", os.path.join(lib, "OW-P101", "DE-H.json"), "--json", out,
                 "--analyst", "R. Okafor", os.path.join(site, rec)])
        check(f"analyze {rec}", r.returncode == 0, r.stderr)
        with open(out, encoding="utf-8") as f:
            doc = json.load(f)
        check(f"{rec} is {verdict}", doc.get("verdict") == verdict, doc.get("verdict"))
        findings[verdict] = out

    # ---- JSON Schemas ----
    def schema(name):
        with open(os.path.join(schemas, name), encoding="utf-8") as f:
            s = json.load(f)
        jsonschema.Draft7Validator.check_schema(s)
        return jsonschema.Draft7Validator(s)

    def validate(validator, doc, name):
        errors = sorted(validator.iter_errors(doc), key=lambda e: list(e.path))
        check(f"schema: {name}", not errors,
              "; ".join(f"{'/'.join(map(str, e.path))}: {e.message}" for e in errors[:3]))

    fv, rv, runv, cv = (schema("finding.schema.json"), schema("route-row.schema.json"), schema("route.schema.json"),
                        schema("compare.schema.json"))
    reviews_v = schema("reviews.schema.json")
    for verdict, path in findings.items():
        with open(path, encoding="utf-8") as f:
            validate(fv, json.load(f), f"finding ({verdict})")
    for name in sorted(os.listdir(os.path.join(route, "findings"))):
        with open(os.path.join(route, "findings", name), encoding="utf-8") as f:
            validate(fv, json.load(f), f"route finding {name}")
    with open(os.path.join(route, "summary.jsonl"), encoding="utf-8") as f:
        rows = [json.loads(line) for line in f if line.strip()]
    # 7 rows of one channel, 2 triaxial rows of three channels each, the failing row.
    check("summary.jsonl holds every manifest row, one per channel", len(rows) == 14, str(len(rows)))
    tri = {(r["datetime"][:10], r["channel"]): r["verdict"] for r in rows if r["point"] == "NDE-T"}
    check("the triaxial visit (a MATLAB file in volts) is developed on its X axis",
          tri.get(("2026-11-02", 0)) == "developed", str(tri))
    check("after the repair (a CSV in m/s2, judged against a baseline learned from volts) every axis is normal",
          all(tri.get(("2026-11-09", c)) == "normal" for c in (0, 1, 2)), str(tri))
    check("one row is an error with its reason", sum(r["verdict"] == "error" for r in rows) == 1)
    for row in rows:
        validate(rv, row, f"route row line {row.get('line')} ({row.get('verdict')})")
    with open(os.path.join(route, "route.json"), encoding="utf-8") as f:
        run_doc = json.load(f)
    validate(runv, run_doc, "route.json")
    p101 = [m for m in run_doc.get("machines", []) if m["machine"] == "OW-P101"]
    check("route.json gives OW-P101 one state over its 2 points and 4 channels",
          len(p101) == 1 and p101[0]["points"] == 2 and p101[0]["channels"] == 4, str(p101))
    # The triaxial visit analysed as one point: the point's verdict and a finding per channel.
    point = os.path.join(work, "finding-point.json")
    r = run([cavitas, "analyze", "--channel", "all", "--sensitivity", "100mV/g", "--unit", "V", "--variable", "acc",
             "--baseline", os.path.join(lib, "OW-P101", "NDE-T.json"), "--json", point,
             os.path.join(site, "OW-P101_NDE-T_2026-11-02.mat")])
    check("analyze --channel all of the triaxial MATLAB file", r.returncode == 0, r.stderr)
    with open(point, encoding="utf-8") as f:
        point_doc = json.load(f)
    validate(fv, point_doc, "finding of a point of three channels")
    check("the point is developed, worst on channel 0, with a finding per channel",
          point_doc.get("point", {}).get("verdict") == "developed" and point_doc["point"]["worst_channel"] == 0
          and len(point_doc.get("channels", [])) == 3, str(point_doc.get("point")))
    with open(compare, encoding="utf-8") as f:
        validate(cv, json.load(f), "compare.json")
    with open(compare_event, encoding="utf-8") as f:
        around = json.load(f)
    validate(cv, around, "compare.json of --around-event")
    check("compare --around-event took the visits of 11-02 and 11-09 (samples/route.csv)",
          [os.path.basename(x["path"]) for x in around["before"] + around["after"]]
          == ["OW-P101_2026-11-02.wav", "OW-P101_2026-11-09.wav"], str(around.get("before")))
    check("route.json lists the manifest's event (samples/route.csv, its last row)",
          [(e["machine"], e["point"], e["datetime"]) for e in run_doc.get("events", [])]
          == [("OW-P101", "", "2026-11-04T00:00:00")], str(run_doc.get("events")))
    # The most impulsive segment's waveform (plots.waveform): both traces, of one
    # length, inside the recording (the analyzer's excerpt, models/analyzer.hpp).
    for verdict, path in findings.items():
        with open(path, encoding="utf-8") as f:
            doc = json.load(f)
        w = doc.get("plots", {}).get("waveform", {})
        keys = ("start_s", "sample_rate_hz", "unit", "segment_kurtosis", "hf_low_hz", "hf_high_hz", "raw", "hf")
        check(f"finding ({verdict}) has plots.waveform with its keys", all(k in w for k in keys), sorted(w))
        if all(k in w for k in keys):
            n = len(w["raw"])
            check(f"finding ({verdict}) waveform traces are of one length, 2 .. 4096 values",
                  n == len(w["hf"]) and 2 <= n <= 4096, f"{n} and {len(w['hf'])}")
            check(f"finding ({verdict}) waveform lies inside the recording",
                  0.0 <= w["start_s"] and w["start_s"] + n / w["sample_rate_hz"] <= doc["input"]["duration_s"] + 1e-6,
                  f"{w['start_s']} s + {n} samples")
    # A schema that cannot fail checks nothing: a spoiled finding must be refused.
    with open(findings["developed"], encoding="utf-8") as f:
        spoiled = json.load(f)
    spoiled["verdict"] = "cavitating"
    del spoiled["input"]["sha256"]
    check("schema refuses a finding with an unknown verdict and no SHA-256", len(list(fv.iter_errors(spoiled))) >= 2)

    export_checks(cavitas, site, lib, route, work, validate, schema("work-requests.schema.json"))
    screening_checks(cavitas, site, work, validate, schema("screening.schema.json"))

    # ---- the audit trail: provenance and reviews ----
    base_file = os.path.join(lib, "OW-P101", "DE-H.json")
    with open(base_file, "rb") as f:
        base_sha = hashlib.sha256(f.read()).hexdigest()  # Python's hashlib, independent of cavitas
    with open(base_file, encoding="utf-8") as f:
        base_created = json.load(f)["created_utc"]
    with open(findings["developed"], encoding="utf-8") as f:
        prov = json.load(f).get("provenance", {})
    check("the finding's provenance names the analyst given with --analyst", prov.get("analyst") == "R. Okafor", str(prov))
    check("... the baseline's SHA-256 as hashlib computes it", prov.get("baseline_sha256") == base_sha,
          f"{prov.get('baseline_sha256')} vs {base_sha}")
    check("... and the baseline's created_utc", prov.get("baseline_created_utc") == base_created)
    check("route.json names the analyst given with --analyst",
          run_doc.get("provenance", {}).get("analyst") == "R. Okafor", str(run_doc.get("provenance")))
    with open(findings["developed"], "rb") as f:
        developed_bytes = f.read()
    reason = "suction valve half shut for a test that hour"
    r = run([cavitas, "review", findings["developed"], "--override", "incipient", "--reason", reason,
             "--analyst", "J. Ng"])
    check("review --override of the developed finding", r.returncode == 0, r.stderr)
    with open(findings["developed"], "rb") as f:
        check("the review left the finding's bytes as they were", f.read() == developed_bytes)
    reviews_path = findings["developed"][:-len(".json")] + ".reviews.json"
    with open(reviews_path, encoding="utf-8") as f:
        validate(reviews_v, json.load(f), "reviews of the developed finding")
    spoiled_reviews = {"schema": "cavitas.reviews/1", "finding": "x.json", "finding_sha256": "0" * 64,
                       "reviews": [{"reviewed_utc": "2026-11-17T09:00:00Z", "analyst": "J. Ng", "decision": "override",
                                    "verdict": "normal", "original_verdict": "developed", "reason": ""}]}
    check("schema refuses an override without a reason", len(list(reviews_v.iter_errors(spoiled_reviews))) >= 1)
    p102 = [row for row in rows if row["machine"] == "OW-P102" and row["verdict"] == "developed"]
    route_reason = "bearing replaced the day before; recheck next week"
    if check("the route has a developed OW-P102 finding to review", len(p102) >= 1):
        r = run([cavitas, "review", os.path.join(route, p102[0]["finding"]), "--override", "incipient",
                 "--reason", route_reason, "--analyst", "J. Ng"])
        check("review of a route finding", r.returncode == 0, r.stderr)

    # ---- reports ----
    reports = os.path.join(work, "reports")
    os.makedirs(reports, exist_ok=True)
    inputs = [(f"finding-{v}", findings[v], v) for v in findings] + [("route", route, "route"),
                                                                      ("compare", compare, "compare")]
    expected_words = {"normal": "No cavitation found", "incipient": "Incipient cavitation",
                      "developed": "Developed cavitation", "indeterminate": "No verdict",
                      "route": "Look at first: OW-P102 DE-H", "compare": "Improved"}
    for name, src, kind in inputs:
        html, pdf = os.path.join(reports, name + ".html"), os.path.join(reports, name + ".pdf")
        r = run([cavitas, "report", src, "--html", html, "--pdf", pdf, "--work-order", "WO-2611-0042",
                 "--site", "Orrin Weir pumping station", "--analyst", "R. Okafor"])
        if not check(f"report {name}", r.returncode == 0, r.stderr):
            continue
        m = re.search(r"\((\d+) pages?, A4\)", r.stdout)
        announced = int(m.group(1)) if m else -1
        with open(html, encoding="utf-8") as f:
            page = f.read()
        refs = re.findall(r"""(?:src|href)\s*=\s*["']([^"']*)["']""", page, flags=re.I)
        outside = [u for u in refs if not (u.startswith("#") or u.startswith("data:"))]
        check(f"{name}.html refers to nothing outside itself", not outside, ", ".join(outside[:3]))
        check(f"{name}.html has no http(s) URL", not re.search(r"https?://", page) or
              all(u.startswith("http://www.w3.org/") for u in re.findall(r"https?://[^\s\"'<>)]+", page)),
              ", ".join(set(re.findall(r"https?://[^\s\"'<>)]+", page)) - {"http://www.w3.org/2000/svg"}))
        check(f"{name}.html has no script, link, import or file URL",
              not re.search(r"<script|<link|@import|file:", page, flags=re.I))
        check(f"{name}.html says the verdict", expected_words[kind] in page, expected_words[kind])
        check(f"{name}.html carries the cautions", "lock out and tag out" in page)
        check(f"{name}.html draws its charts inline", page.count("<svg") >= (0 if kind == "indeterminate" else 1))
        info = run(["pdfinfo", pdf]).stdout
        pages = int(re.search(r"Pages:\s+(\d+)", info).group(1)) if "Pages:" in info else 0
        check(f"{name}.pdf has the {announced} pages cavitas announced", pages == announced and pages >= 2,
              f"pdfinfo says {pages}")
        text = words(run(["pdftotext", "-layout", pdf, "-"]).stdout)
        check(f"{name}.pdf text says the verdict", expected_words[kind] in text, expected_words[kind])
        check(f"{name}.pdf text carries the cautions", "lock out and tag out" in text)
        check(f"{name}.pdf text names the work order", "WO-2611-0042" in text)
        if kind == "route":
            # OW-P101's repair (samples/route.csv's event row) under its history charts, with its date and words.
            check("route.pdf lists the repair event under the history chart",
                  "Event 2026-11-04 'strainer cleaned, sump level control reset' (every point of the machine)" in text)
        if kind in ("normal", "incipient", "developed"):
            # A finding calibrated in g (--full-scale 50g): velocity in mm/s RMS and absolute
            # levels re the ISO 1683:2015 reference (methods notes A7) are shown with their references.
            for what in ("mm/s RMS", "dB re 1 µm/s²", "dB re baseline"):
                check(f"{name}.pdf text shows '{what}'", what in text, what)
                check(f"{name}.html shows '{what}'", what in page, what)
        if name == "finding-developed":
            # cavitas's verdict and the analyst's decision side by side (the review above), and who analysed it.
            for what in ("Developed cavitation", "cavitas said developed", "incipient (overrides cavitas)", reason,
                         "J. Ng", "R. Okafor on ", base_sha[:16]):
                check(f"{name}.pdf text shows '{what}'", what in text, what)
        raw = run(["pdftotext", "-raw", pdf, "-"]).stdout  # cells in drawing order: a wrapped cell reads whole
        broken = broken_words(page, raw)
        check(f"{name}.pdf breaks no word of a table cell or list item inside ({len(broken)} broken)", not broken,
              ", ".join(broken[:6]))
        if kind == "route":
            # Every finding's actions and the operator's words, whole (the demo's OW-P103 bearing family,
            # OW-P102's throttled valve and duty, its large margin pointing at recirculation).
            for what in ("What to do, point by point", "Check the bearings: impacts repeat at 3.31x shaft speed",
                         "bearing-like (non-integer order), not cavitation; check the bearings",
                         "discharge valve throttled for a network test", "35 % of the baseline's flow",
                         "suction recirculation at part load is the first suspect", "re-check within 14 days",
                         "Earlier visits on this route", "sump drawn down 4 m, suction strainer fouled"):
                check(f"{name}.pdf text shows '{what}'", what in text or what in words(raw), what)
                check(f"{name}.html shows '{what}'", what in words(re.sub(r"<[^>]+>", "", page)), what)
            check(f"{name}: no note is cut short", "…" not in text and not re.search(r"[A-Za-z]\.\.\.", text))
            check(f"{name}: no empty header field", "Point -" not in text and "Machine -" not in text)
            # The banner's point is the first row of the table under it (one order of attention).
            latest = page.find("Each point at its latest visit")
            first_row = page[page.find("<tbody>", latest):page.find("</tr>", page.find("<tbody>", latest))]
            check(f"{name}: the banner's point OW-P102 DE-H is the table's first row",
                  "Look at first: OW-P102 DE-H" in page and "OW-P102" in first_row and "DE-H" in first_row,
                  re.sub(r"<[^>]+>", " ", first_row)[:120])
            for what in ("Analyst reviews", "J. Ng", "Route run by R. Okafor"):
                check(f"{name}.pdf text shows '{what}'", what in text, what)
            # Table cells wrap in the PDF: the whole cells are read in the HTML.
            for what in ("override: incipient", route_reason):
                check(f"{name}.html shows '{what}' in the reviews table", what in page, what)
        if name.startswith("finding-"):
            # The finding page's waveform chart: its two titles and its caption.
            check(f"{name}.pdf shows the waveform as recorded and band-passed",
                  "Waveform as recorded" in text and "Waveform band-passed to the HF band" in text)
            check(f"{name}.html captions the waveform", "Waveform of the most impulsive stretch" in page)
    # A finding written before the waveform existed (no plots.waveform) still reports, without the chart.
    with open(findings["developed"], encoding="utf-8") as f:
        older = json.load(f)
    del older["plots"]["waveform"]
    older_path = os.path.join(work, "finding-without-waveform.json")
    with open(older_path, "w", encoding="utf-8") as f:
        json.dump(older, f)
    older_html = os.path.join(reports, "finding-without-waveform.html")
    r = run([cavitas, "report", older_path, "--html", older_html])
    check("a finding without plots.waveform reports", r.returncode == 0, r.stderr)
    if r.returncode == 0:
        with open(older_html, encoding="utf-8") as f:
            page = f.read()
        check("... with its verdict and no waveform chart",
              "Developed cavitation" in page and "Waveform of the most impulsive stretch" not in page)
    # A waveform longer than the report reads is refused with the field named.
    spoiled = json.loads(json.dumps(older))
    with open(findings["developed"], encoding="utf-8") as f:
        spoiled["plots"]["waveform"] = json.load(f)["plots"]["waveform"]
    spoiled["plots"]["waveform"]["raw"] = [0.0] * 8193
    spoiled["plots"]["waveform"]["hf"] = [0.0] * 8193
    spoiled_path = os.path.join(work, "finding-long-waveform.json")
    with open(spoiled_path, "w", encoding="utf-8") as f:
        json.dump(spoiled, f)
    r = run([cavitas, "report", spoiled_path, "--html", os.path.join(reports, "never.html")])
    check("a waveform of 8193 values is refused naming the field",
          r.returncode != 0 and "plots.waveform.raw" in r.stderr and not os.path.exists(os.path.join(reports, "never.html")),
          r.stderr)
    inception_checks(cavitas, work, reports, validate, schema("inception.schema.json"))
    # Letter paper.
    letter = os.path.join(reports, "finding-developed-letter.pdf")
    r = run([cavitas, "report", findings["developed"], "--pdf", letter, "--paper", "letter"])
    info = run(["pdfinfo", letter]).stdout
    check("--paper letter gives 612 x 792 pt pages", r.returncode == 0 and "612 x 792 pts" in info, info[-200:])
    return finish()


# ---------------------------------------------------------------------------------------------

def png_content(path):
    """(width, height, share of non-white pixels) of an 8-bit RGB(A) PNG, by the book (RFC 2083)."""
    with open(path, "rb") as f:
        data = f.read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        return 0, 0, 0.0
    pos, idat, width, height, ctype = 8, b"", 0, 0, 0
    while pos < len(data):
        length, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + length]
        if kind == b"IHDR":
            width, height, depth, ctype = struct.unpack(">IIBB", body[:10])
            if depth != 8 or ctype not in (2, 6):
                return width, height, 0.0
        elif kind == b"IDAT":
            idat += body
        pos += 12 + length
    raw = zlib.decompress(idat)
    bpp = 3 if ctype == 2 else 4
    stride = width * bpp
    prev = bytearray(stride)
    inked = 0
    for y in range(height):
        ft = raw[y * (stride + 1)]
        line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
        for i in range(stride):
            a = line[i - bpp] if i >= bpp else 0
            b = prev[i]
            c = prev[i - bpp] if i >= bpp else 0
            if ft == 1:
                line[i] = (line[i] + a) & 255
            elif ft == 2:
                line[i] = (line[i] + b) & 255
            elif ft == 3:
                line[i] = (line[i] + (a + b) // 2) & 255
            elif ft == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                line[i] = (line[i] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        for x in range(0, stride, bpp):
            if line[x] < 235 or line[x + 1] < 235 or line[x + 2] < 235:
                inked += 1
        prev = line
    return width, height, inked / float(width * height)


# Run in a copy of a report (the reports themselves carry no script): every word of every table
# cell and list item measured with a DOM Range; a word whose text takes more than one line box
# is broken inside. The page's own width against the window's says whether it scrolls sideways.
LAYOUT_SCRIPT = r"""
<script>
(function () {
  const broken = [];
  for (const el of document.querySelectorAll('th, td, li, .verdict .detail')) {
    const walker = document.createTreeWalker(el, NodeFilter.SHOW_TEXT);
    for (let node = walker.nextNode(); node; node = walker.nextNode()) {
      // Words between blanks; a word longer than 30 characters may wrap after its slashes (a path).
      const re = /\S+/g;
      const pieces = [];
      let w;
      while ((w = re.exec(node.data)) !== null) {
        if (w[0].length > 30 && w[0].includes('/')) {
          let at = w.index;
          for (const part of w[0].split(/(?<=\/)/)) { pieces.push({index: at, 0: part}); at += part.length; }
        } else {
          pieces.push({index: w.index, 0: w[0]});
        }
      }
      for (const m of pieces) {
        if (m[0].length === 0) continue;
        const r = document.createRange();
        r.setStart(node, m.index);
        r.setEnd(node, m.index + m[0].length);
        const tops = new Set(Array.from(r.getClientRects()).filter(b => b.width > 0).map(b => Math.round(b.top)));
        if (tops.size > 1) broken.push(m[0]);
      }
    }
  }
  const out = document.createElement('pre');
  out.id = 'layout-check';
  out.textContent = JSON.stringify({broken: broken.slice(0, 20), count: broken.length,
                                    page_width: document.documentElement.scrollWidth, window_width: window.innerWidth});
  document.body.appendChild(out);
})();
</script>
"""


def layout_of(chromium, flags, html, width):
    with open(html, encoding="utf-8") as f:
        page = f.read()
    probe = html[:-len(".html")] + ".layout-probe.html"
    with open(probe, "w", encoding="utf-8") as f:
        f.write(page.replace("</body>", LAYOUT_SCRIPT + "</body>"))
    r = run([chromium, *flags, f"--window-size={width},1200", "--dump-dom", "file://" + os.path.abspath(probe)],
            timeout=120)
    m = re.search(r'<pre id="layout-check">(.*?)</pre>', r.stdout, flags=re.S)
    if not m:
        return None
    return json.loads(m.group(1).replace("&quot;", '"').replace("&amp;", "&").replace("&lt;", "<").replace("&gt;", ">"))


def browser(work):
    chromium = shutil.which("chromium") or shutil.which("chromium-browser")
    if not chromium:
        print("SKIP: chromium not found (Debian package chromium; .ci/run installs it)")
        return 77
    if not shutil.which("pdftotext"):
        print("SKIP: pdftotext not found (install poppler-utils)")
        return 77
    reports = os.path.join(work, "reports")
    if not os.path.isdir(reports):
        print(f"FAIL  no reports in {reports} (run the report_outputs test first)")
        return 1
    profile = os.path.join(work, "chromium-profile")
    flags = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
             "--disable-background-networking", "--disable-component-update", "--disable-sync",
             "--hide-scrollbars", "--enable-logging=stderr", "--v=0", f"--user-data-dir={profile}"]
    expected = {"finding-normal": "No cavitation found", "finding-incipient": "Incipient cavitation",
                "finding-developed": "Developed cavitation", "finding-indeterminate": "No verdict",
                "route": "Look at first", "compare": "Improved"}
    for name, words_expected in expected.items():
        html = os.path.abspath(os.path.join(reports, name + ".html"))
        shot = os.path.join(reports, name + ".screen.png")
        printed = os.path.join(reports, name + ".printed.pdf")
        for p in (shot, printed):
            if os.path.exists(p):
                os.remove(p)
        r = run([chromium, *flags, "--window-size=1000,1600", f"--screenshot={shot}", "file://" + html], timeout=120)
        console = [line for line in r.stderr.splitlines() if "CONSOLE" in line or "Failed to load resource" in line]
        check(f"{name}: no console errors while loading", not console, "; ".join(console[:2]))
        if check(f"{name}: screenshot taken", os.path.exists(shot), r.stderr[-300:]):
            w, h, inked = png_content(shot)
            check(f"{name}: the screenshot shows a page ({w}x{h}, {100 * inked:.1f} % inked)",
                  w >= 1000 and h >= 1600 and inked > 0.05, f"{w}x{h}, {inked:.3f}")
        lay = layout_of(chromium, flags, html, 1000)
        if check(f"{name}: the layout probe ran", lay is not None):
            check(f"{name}: at 1000 px no word of a cell or list item breaks inside ({lay['count']} do)",
                  lay["count"] == 0, ", ".join(lay["broken"][:8]))
            check(f"{name}: at 1000 px the page does not scroll sideways ({lay['page_width']} px wide)",
                  lay["page_width"] <= lay["window_width"], f"{lay['page_width']} > {lay['window_width']}")
        r = run([chromium, *flags, "--no-pdf-header-footer", f"--print-to-pdf={printed}", "file://" + html], timeout=120)
        if check(f"{name}: prints to PDF", os.path.exists(printed), r.stderr[-300:]):
            text = words(run(["pdftotext", printed, "-"]).stdout)
            check(f"{name}: the printed PDF says the verdict", words_expected in text, words_expected)
    return finish()


def main(argv):
    if len(argv) >= 6 and argv[1] == "outputs":
        return outputs(*argv[2:6])
    if len(argv) >= 3 and argv[1] == "browser":
        return browser(argv[2])
    print(__doc__)
    return 2


if __name__ == "__main__":
    sys.exit(main(sys.argv))
