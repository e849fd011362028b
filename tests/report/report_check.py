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
      print to PDF with the verdict in its text.

One line per check, then "N passed, M failed". Exit 0 all pass, 1 a failure,
77 when a tool is missing (jsonschema, poppler-utils, chromium).
"""

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


def finish():
    print(f"{PASSED} passed, {FAILED} failed")
    return 1 if FAILED else 0


# ---------------------------------------------------------------------------------------------

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
    r = run([cavitas, "route", manifest, "--baselines", lib, "--out", route])
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
                 os.path.join(site, rec)])
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
