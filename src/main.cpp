// cavitas: is this pump or turbine cavitating, judged against its own baseline?
#include <CLI/CLI.hpp>
#include <unistd.h>

#include <cstdint>
#include <cstdlib>

#include <iostream>
#include <map>
#include <sstream>

#include "src/commands/analyst_review.hpp"
#include "src/commands/commands.hpp"
#include "src/commands/event.hpp"
#include "src/commands/export.hpp"
#include "src/commands/inception.hpp"
#include "src/commands/process_tuning.hpp"
#include "src/io/analyst.hpp"
#include "src/io/errors.hpp"
#include "src/output/plain_text.hpp"
#include "src/io/plan_store.hpp"
#include "src/io/units.hpp"
#include "src/report/report_options.hpp"
#include "src/commands/review.hpp"
#include "src/route/route.hpp"

using namespace cavitas::app;

namespace {

// A number typed by a person is decimal: CLI11 would read "nan", "inf" and
// "0x10" as numbers (and NaN passes every range check), so each comma-separated
// value must be digits, a point, a sign and an exponent only.
const CLI::Validator kDecimal(
    [](std::string& text) -> std::string {
        std::stringstream ss(text);
        for (std::string v; std::getline(ss, v, ',');) {
            if (!is_decimal(v)) return "'" + v + "' is not a decimal number";
        }
        return {};
    },
    "DECIMAL");


const char* kIntro =
    "cavitas - cavitation finder for pumps and hydro turbines.\n"
    "\n"
    "Learn a baseline from known-good recordings of one machine and measurement point,\n"
    "then judge a new recording from the same point against it: normal, incipient or\n"
    "developed cavitation (or indeterminate when the data cannot support a verdict),\n"
    "with the evidence in numbers, read beside the NPSH margin when the operating\n"
    "point is given (flags, or NAME.op.toml beside the recording).\n"
    "\n"
    "  cavitas baseline --rpm 1485 --vanes 7 --full-scale 50g -o P101.json good1.wav good2.wav\n"
    "  cavitas analyze  --baseline P101.json --rpm 1490 --json finding.json today.wav\n"
    "  cavitas npsh     --suction-pressure 35kPa --temperature 60C --flow 120m3/h --bore 150mm --npsh3 4.2m\n"
    "  cavitas info     export.uff       (what a file holds: channels, rates, lengths, units)\n"
    "  cavitas review   finding.json --override normal --reason \"valve throttled that day\"\n"
    "  cavitas route    route.csv --baselines lib --out today   (a whole route, worst point first)\n"
    "  cavitas event    OW-P101 --date 2026-11-04 --what \"impeller replaced\" --baselines lib\n"
    "  cavitas export   today --work-requests requests.csv   (each point's actions, for a maintenance system)\n"
    "  cavitas report   today --pdf route.pdf   (work-order report: HTML and PDF)\n"
    "  cavitas inception sweep.csv --json npsh-test.json --pdf npsh-test.pdf   (acoustic NPSH test)\n"
    "\n"
    "Exit status: 0 a verdict was reached (indeterminate included), 1 unreadable or\n"
    "invalid input, 2 a usage error.";

// Errors are one line: control characters (a newline in a file name) are shown escaped.
std::string one_line(const std::string& s) {
    std::string o;
    for (char c : s) {
        if (c == '\n') o += "\\n";
        else if (c == '\r') o += "\\r";
        else o += c;
    }
    return o;
}

// The operating-point flags, the same on every command that takes them.
// beside_recording: the command reads NAME.op.toml beside each recording by default.
// A CSV waveform's delimiter and decimal mark, when detection is not wanted.
void add_csv_flags(CLI::App* cmd, ReadRequest& read) {
    static const std::map<std::string, char> delimiters{{",", ','}, {";", ';'}, {"tab", '\t'}, {"space", ' '}};
    static const std::map<std::string, char> decimals{{".", '.'}, {",", ','}};
    cmd->add_option("--csv-delimiter", read.csv_delimiter,
                    "Field delimiter of a CSV waveform: ',', ';', tab or space (default: detected)")
        ->transform(CLI::CheckedTransformer(delimiters));
    cmd->add_option("--csv-decimal", read.csv_decimal, "Decimal mark of a CSV waveform: '.' or ',' (default: detected)")
        ->transform(CLI::CheckedTransformer(decimals));
}

// Which channel of a file and how its values become engineering units.
// How a command uses its recordings: learns a baseline, judges against one, or screens one alone.
enum class ReadingRole { learn, judge, screen };

void add_reading_flags(CLI::App* cmd, std::string& channels, CalibrationText& cal, ReadRequest& read, ReadingRole role) {
    const std::string what = "A channel is a sound file's channel, a column of a CSV waveform or a MATLAB matrix, a "
                             "dataset of a UFF file; 'cavitas info FILE' lists them. ";
    cmd->add_option("--channel", channels,
                    role == ReadingRole::screen
                        ? "Channel to read, from 0 (one). " + what
                        : "Channel(s) to read, from 0: one (2), several (0,1,2: a triaxial sensor) or all. " + what +
                              std::string(role == ReadingRole::learn
                                              ? "Several channels are learned into one baseline file, each with its "
                                                "own statistics."
                                              : "Several channels are each judged against their own statistics in "
                                                "the baseline; the point's verdict is the worst channel's."));
    const std::string later = role == ReadingRole::learn ? " Analyses against the baseline use its calibration unless told otherwise."
                              : role == ReadingRole::judge ? " Default: the baseline's, for files whose values come in the unit its did."
                                                           : "";
    cmd->add_option("--full-scale", cal.full_scale,
                    "What a full-scale sample of a sound file (WAV, FLAC) means: 50g, 500m/s2, 2000Pa (hydrophone), "
                    "or the voltage 10V to combine with --sensitivity. Without any calibration levels stay in "
                    "full-scale units (FS)." + later);
    cmd->add_option("--sensitivity", cal.sensitivity,
                    "The sensor's sensitivity, to turn volts into g, m/s2 or Pa: 100mV/g, 10.2mV/(m/s2), 50mV/Pa, or "
                    "for a hydrophone 0.1V/uPa or -200dB re 1V/uPa. For files of volts (a UFF or CSV stating V or "
                    "mV, a MATLAB file); a sound file needs --full-scale in volts too");
    cmd->add_option("--gain", cal.gain, "Amplifier gain between sensor and recorder, a factor (10) or dB (20dB); "
                                        "needs --sensitivity");
    cmd->add_option("--unit", cal.unit, "Unit of the values of a file that states none (a MATLAB file, a CSV "
                                        "without units): g, m/s2, Pa, kPa, V or mV");
    cmd->add_option("--variable", read.variable, "The variable of a MATLAB file to read (default: its only numeric "
                                                 "vector or matrix)");
    cmd->add_option("--sample-rate", read.sample_rate_hz, "Sample rate, Hz, of a file that does not state it (a CSV "
                                                          "without a time column or rate line, most MATLAB files)")
        ->check(kDecimal)->check(CLI::Range(1.0, 1.0e7));
    add_csv_flags(cmd, read);
}

// --channel: one channel goes to read.channel, a list or "all" to `several`.
void set_channels(const std::string& text, ReadRequest& read, std::optional<ChannelSelection>& several) {
    if (text.empty()) return;
    const ChannelSelection s = parse_channels(text);
    if (!s.all && s.channels.size() == 1) read.channel = s.channels.front();
    else several = s;
}

void add_operating_point_flags(CLI::App* cmd, OperatingPointFlags& f, bool beside_recording) {
    for (const auto& field : operating_point_fields()) {
        if (!field.flag) continue;
        const std::string key = field.key;
        auto* opt = cmd->add_option(field.flag, f.values[field.key], field.help)->group("Operating point");
        if (key == "pressure_ref") opt->check(CLI::IsMember({"gauge", "absolute"}));
        else if (key == "npsh3_curve") opt->type_name("FILE");
        else if (key == "sigma_critical") opt->type_name("NUMBER");
        else opt->type_name("VALUE+UNIT");
    }
    cmd->add_option("--operating-point", f.file,
                    std::string("TOML file of the operating point (keys as the flags with _ for -: suction_pressure = "
                                "\"35 kPa\", temperature = \"60 C\", flow = \"120 m3/h\", speed = \"1485 rpm\", "
                                "note = \"...\"); flags override it") +
                        (beside_recording ? ". Default: NAME.op.toml beside the recording NAME.wav, when there is one"
                                          : ""))
        ->group("Operating point")
        ->type_name("FILE");
}

// --analyst, the same on every command that records who ran it.
void add_analyst_flag(CLI::App* cmd, std::optional<std::string>& analyst, const std::string& where) {
    cmd->add_option("--analyst", analyst,
                    "Who runs this, recorded in " + where + " with the host name (default: the login name: $USER, $LOGNAME "
                    "or the account's)")
        ->type_name("NAME");
}

const char* kReviewHelp =
    "An analyst's decision on a finding: agree with its verdict, or override it with another and say why.\n"
    "The finding itself is never changed: the review is kept beside it in FINDING.reviews.json (the\n"
    "finding's file name and SHA-256, then every review in order: when, who, on which host, agree or\n"
    "override, the verdict decided, cavitas's original verdict and the reason). A second review is\n"
    "appended. A finding whose bytes no longer match the SHA-256 its reviews recorded is refused.\n"
    "'cavitas report' shows cavitas's verdict and the reviews side by side; a route run again into its\n"
    "folder keeps the reviews of findings it makes again unchanged (route --help).\n"
    "\n"
    "  cavitas review finding.json --agree --analyst \"R. Okafor\"\n"
    "  cavitas review route-2026-11/findings/L000012_OW-P102_DE-H.json --override incipient \\\n"
    "                 --reason \"suction valve half shut during the recording; re-measure at duty\"\n"
    "\n"
    "Exit status: 0 recorded, 1 the finding or its reviews file cannot be used, 2 a usage error.";

const char* kExportHelp =
    "Work requests for a maintenance system from a route's output folder: the route's current state,\n"
    "one request per action of each machine point's (and channel's) latest visit. Earlier visits'\n"
    "actions are superseded by the latest visit's and are not exported; a point whose latest visit\n"
    "asks for nothing gives no request; a latest row that could not be analysed (verdict error) gives\n"
    "one request to put it right and analyse it again (priority soon). Requests come in the route's\n"
    "order of attention (as 'route' prints it and 'report' shows it: worst point first), each point's\n"
    "actions soonest first. The format is told by the extension: OUT.csv is CSV (RFC 4180, UTF-8, a\n"
    "header row; a cell a spreadsheet would run as a formula gets a leading '), OUT.json is\n"
    "cavitas.work-requests/1 (src/schemas/work-requests.schema.json). The route folder is only read;\n"
    "OUT may lie beside its files, never over one. Exporting the same route again gives the same ids.\n"
    "\n"
    "  cavitas export route-2026-11 --work-requests requests-2026-11.csv\n"
    "\n"
    "Columns, in this order (the JSON keys alike):\n"
    "  request_id                 WR-<first 16 hex digits of finding_sha256>-<action number from 1>\n"
    "  asset, point, channel      machine tag, measurement point, channel (from 0)\n"
    "  recorded                   when the visit was recorded (ISO 8601, as the route has it)\n"
    "  priority, priority_rank    urgent 1 (within a day), soon 2 (a week), planned 3, watch 4\n"
    "  recheck_by, recheck_days   re-measure by this date: the recorded date + recheck_days\n"
    "  description                the step to take, whole, on one line\n"
    "  topic, concern             cavitation, suction_margin, other_finding (concern: which),\n"
    "                             cannot_judge, recording_quality, baseline or analysis_failed\n"
    "  verdict, confidence_grade  the visit's verdict and its grade\n"
    "  operator_note              the operator's note of the visit, on one line\n"
    "  finding, finding_sha256    the finding (relative to the route folder), the SHA-256 of its bytes\n"
    "  basis                      where the priority and the interval come from\n"
    "\n"
    "Exit status: 0 written, 1 the folder is not a route or a finding cannot be read, 2 a usage error.";

const char* kNpshHelp =
    "NPSH available at the impeller-eye datum from a suction-gauge reading, its margin over the\n"
    "pump's NPSH3, and for turbines the plant Thoma number. Every value carries its unit.\n"
    "\n"
    "  NPSHa = (p_abs - p_v) / (rho g) + v^2 / (2 g) + z\n"
    "    p_abs  suction pressure, absolute (a gauge reading + the barometric pressure)\n"
    "    p_v    vapour pressure of the liquid at its temperature (water: IAPWS-IF97)\n"
    "    rho    liquid density (water: IAPWS-IF97 region 1); g = 9.80665 m/s2\n"
    "    v      mean velocity in the suction pipe at the gauge (--flow / bore area)\n"
    "    z      height of the gauge above the impeller-eye datum (--gauge-height)\n"
    "  Margin: NPSHa - NPSH3 (m) and NPSHa / NPSH3. NPSH3 is where the pump's head has fallen by 3 %:\n"
    "  cavitation is already well developed there, and starts well above it.\n"
    "  Thoma (turbine): sigma = (H_atm - H_v - H_s) / H, heads in metres of liquid.\n"
    "\n"
    "  cavitas npsh --suction-pressure 35kPa --temperature 60C --elevation 350m --gauge-height 0.8m \\\n"
    "               --flow 120m3/h --bore 150mm --npsh3 4.2m\n"
    "  cavitas npsh --suction-pressure 5psig --temperature 140F --barometric 14.7psi --flow 500gpm --bore 6in\n"
    "  cavitas npsh --temperature 12C --elevation 350m --runner-setting 3m --net-head 50m --sigma-critical 0.09\n"
    "\n"
    "Units: pressure Pa, hPa, kPa, MPa, bar, mbar, psi (psig/psia, barg/bara say gauge or absolute);\n"
    "length m, cm, mm, ft, in; temperature C, F, K; flow m3/h, m3/s, L/s, L/min, gpm (US);\n"
    "density kg/m3, g/cm3, lb/ft3. A number without a unit is refused.";

const char* kInceptionHelp =
    "The acoustic NPSH test: where, as the suction pressure of a pump is lowered step by step, its\n"
    "high-frequency vibration starts to rise over the quiet plateau - cavitation inception, NPSHi -\n"
    "beside the 3 % head-drop point NPSH3, where cavitation is already well developed.\n"
    "\n"
    "  cavitas inception sweep.csv --json npsh-test.json --pdf npsh-test.pdf\n"
    "  cavitas inception sweep-700rpm.csv --at-rpm 1000     (read a sweep made at 700 rpm at 1000 rpm)\n"
    "\n"
    "The sweep: a route manifest (see 'cavitas route --help') of ONE machine, point and channel, one\n"
    "recording a row: file, machine, point, channel, datetime, rpm (needed), vanes, the operating\n"
    "point of the row (suction_pressure, temperature, and elevation or barometric for a gauge reading;\n"
    "gauge_height, flow, bore ...: as 'cavitas npsh --help'), the calibration (full_scale, sensitivity,\n"
    "unit), and optionally head (the pump's head at the row, 49.5m) for NPSH3. Each row's NPSHa is\n"
    "computed from its operating point; rows within 0.05 m of NPSHa are one step (several recordings a\n"
    "step tighten the result). At least 3 steps, every file at one sample rate.\n"
    "\n"
    "How NPSHi is found:\n"
    "  1. Every recording is analysed in the same bands (those of the first row's rate, capped by\n"
    "     --sensor-max-hz or --mount); the HF band level of each 1 s segment is kept.\n"
    "  2. Steps at speeds more than 1 % apart (or every step, with --at-rpm) are brought to one speed:\n"
    "     NPSHa x (n_ref / n)^2 (affinity: NPSHR ~ N^2), levels - 40 log10(n / n_ref) dB (exponent\n"
    "     assumed); n_ref = --at-rpm, else the speed of the highest-NPSHa step.\n"
    "  3. The fit runs from the highest NPSHa down to the loudest step; steps below it are 'past the\n"
    "     peak' (the level may fall again as cavitation develops) and are shown but not fitted.\n"
    "  4. A two-segment line, level = a + b max(0, k - NPSHa), is fitted by least squares to every\n"
    "     segment: a the plateau (dB), b the rise (dB/m), k the knee (m).\n"
    "  5. NPSHi = k when the fitted rise at the lowest fitted step, b (k - NPSHa), reaches 3 dB (the HF\n"
    "     alert level of the verdict: twice the HF band power) and at least 95 % of 1000 resampled\n"
    "     sweeps reach it too (recordings within each step and segments within each recording drawn\n"
    "     with replacement, a fixed seed: the same sweep gives the same result).\n"
    "  6. The interval is the 2.5-97.5 percentile of the knee over the resampled sweeps. When only one\n"
    "     step lies below the knee, the data cannot place it between that step and the one above: the\n"
    "     interval is that bracket, NPSHi its midpoint, and the advice is to test steps inside it.\n"
    "  NPSH3: the NPSHa where the head first falls 3 % under the median head of the steps above the\n"
    "  knee, interpolated between the steps either side.\n"
    "\n"
    "A sweep drives the pump into cavitation on purpose: run it only as the pump maker's procedure\n"
    "allows, under ISO 9906 / ANSI/HI 14.6 practice and your site's procedures.\n"
    "\n"
    "Exit status: 0 done (found or not), 1 the sweep or a recording cannot be used (the file and line\n"
    "named), 2 a usage error.";

}  // namespace

int main(int argc, char** argv) {
    // Text from file names, manifests and notes reaches the terminal escaped (src/output/plain_text.hpp).
    const TerminalText terminal_out(std::cout), terminal_err(std::cerr);
    tune_process_memory();  // src/commands/process_tuning.hpp says why
    CLI::App app{kIntro, "cavitas"};
    app.require_subcommand(1);
    app.set_version_flag("--version", std::string("cavitas ") + kVersion);
    app.footer("Run 'cavitas COMMAND --help' for the options of each command.");

    BaselineOptions bo;
    auto* base = app.add_subcommand(
        "baseline",
        "Learn a machine's known-good reference from one or more recordings of the same machine\n"
        "and measurement point. Each recording (a visit) is cut into segments (1 s unless --segment)\n"
        "and kept with every indicator's per-segment values; the baseline stores their medians and\n"
        "spreads (1.4826 x MAD), the bands, the calibration and a speed model: recordings at two\n"
        "or more speeds 15 % apart fit how the band levels follow speed, so a variable-speed pump is\n"
        "judged at any speed in that range. Each recording's speed comes from --rpm, its sidecar\n"
        "NAME.op.toml (speed = \"1200 rpm\") or the spectrum.\n"
        "The recordings are checked and every problem is printed and stored under \"warnings\":\n"
        "a level that steps or drifts inside a recording, recordings that disagree beyond re-mounting,\n"
        "a pump already cavitating (impulsive HF at blade passage, or NPSHa under the guidance or\n"
        "near zero), too little data. Findings against a baseline with warnings repeat them and\n"
        "cannot reach high confidence; --strict refuses such a baseline instead (exit 1).\n"
        "Use recordings made while the machine was known to be healthy; not just after a repair or a\n"
        "start-up while it settles. --add-to B.json adds known-good visits to an existing baseline.");
    base->add_option("recordings", bo.recordings,
                     "Known-good recordings (WAV, FLAC, ... any libsndfile format); none with --from-store");
    base->add_option("-o,--output", bo.output,
                     "Baseline file to write (JSON); written atomically. With --add-to, default: that file");
    base->add_option("--add-to", bo.add_to,
                     "Existing baseline to add these known-good recordings to (same sample rate, channel and "
                     "calibration); its bands, calibration and vane count are kept")
        ->type_name("BASELINE.json");
    base->add_option("--from-store", bo.from_store,
                     "Learn from the normal visits of --machine and --point in this results store (route's "
                     "history.sqlite) instead of listed recordings: the newest --last of them whose margin reading was "
                     "not at risk; each recording must still be where the route read it, unchanged (SHA-256)")
        ->type_name("STORE");
    base->add_option("--point", bo.point, "Measurement point, with --from-store");
    base->add_option("--last", bo.last_visits, "With --from-store: how many of the newest normal visits (default 8)")
        ->check(CLI::Range(1, 1000));
    base->add_flag("--strict", bo.strict,
                   "Refuse (exit 1, nothing written) when the checks find anything, instead of warning");
    base->add_option("--machine", bo.machine,
                     "Tag of the machine and measurement point (e.g. OW-P101-NDE-H), stored in the baseline");
    base->add_option("--rpm", bo.rpms,
                     "Shaft speed during the recordings, rpm: one for all, or one per recording in order, comma "
                     "separated (--rpm 714,1011,1208 for a variable-speed pump); without it each recording's sidecar "
                     "speed, else the speed estimated from the spectrum")
        ->delimiter(',')
        ->check(kDecimal)->check(CLI::Range(1.0, 100000.0));
    base->add_option("--vanes", bo.vanes, "Impeller vanes (runner blades): blade-pass frequency = vanes x rpm / 60")
        ->check(CLI::Range(0, 200));
    std::string base_channels;
    add_reading_flags(base, base_channels, bo.calibration, bo.read, ReadingRole::learn);
    base->add_option("--sensor-max-hz", bo.sensor_max_hz,
                     "Usable top frequency of the sensor as mounted; the HF band stops there")
        ->check(kDecimal)->check(CLI::Range(100.0, 1.0e6));
    base->add_option("--mount", bo.mount,
                     "Sensor mounting, caps the HF band: handheld (2 kHz), magnet (5 kHz), adhesive (6 kHz), stud (7 kHz)")
        ->check(CLI::IsMember({"handheld", "magnet", "adhesive", "stud"}));
    base->add_option("--segment", bo.segment_s,
                     "Analysis segment length, s (default 1); later analyses use it too, shorter only for short "
                     "captures")
        ->check(kDecimal)->check(CLI::Range(0.25, 10.0));
    base->add_flag("--suppression", bo.suppression,
                   "A suppression run: the recordings were made with the suction head raised (tank pressurised, "
                   "level raised, flow reduced) until the HF signs of cavitation were gone, for a pump with no "
                   "known-good state at its duty. Each recording's operating point (suction pressure, temperature, "
                   "NPSH3) must show NPSHa at least 2 x NPSH3; the baseline records the margins and its findings say "
                   "they were judged against a suppression reference. With recordings at several heads, a HF level "
                   "still falling as the head rises is a warning");
    add_operating_point_flags(base, bo.operating, true);

    AnalyzeOptions ao;
    auto* an = app.add_subcommand(
        "analyze",
        "Judge one recording against a baseline of the same machine and point. Prints a short\n"
        "summary; --json writes the full finding (verdict, confidence, evidence, other findings,\n"
        "every indicator beside its baseline, quality and the input's SHA-256) for a work order.");
    an->add_option("recording", ao.recording, "The recording to judge")->required();
    an->add_option("--baseline", ao.baseline, "Baseline file made by 'cavitas baseline' for this machine and point "
                                              "(its own known-good state, or its suppression run)")
        ->type_name("FILE");
    std::string an_reference;
    an->add_option("--reference", an_reference,
                   "Instead of --baseline: another machine's baseline, a sister of the same model at the same duty, "
                   "for a machine with no known-good state of its own. Accepted whatever its tag, channel, speed "
                   "(within 1.5x) or mount; the finding states every difference, reads the band levels with a wider "
                   "spread (3 dB, more at another speed) and is never graded high")
        ->type_name("FILE");
    an->add_option("--machine", ao.machine,
                   "Tag of the machine and point recorded; refused when the baseline names another (not with "
                   "--reference)");
    an->add_option("--rpm", ao.rpm,
                   "Shaft speed during this recording, rpm (may differ from the baseline's by a few percent: "
                   "lines are compared in orders); without it the speed is estimated near the baseline's")
        ->check(kDecimal)->check(CLI::Range(1.0, 100000.0));
    an->add_option("--vanes", ao.vanes, "Impeller vanes (default: the baseline's)")->check(CLI::Range(0, 200));
    std::string an_channels;
    add_reading_flags(an, an_channels, ao.calibration, ao.read, ReadingRole::judge);
    an->add_option("--json", ao.json_output, "Write the finding as JSON to this file (atomically)");
    an->add_option("--sensor-max-hz", ao.sensor_max_hz,
                   "Usable top frequency of the sensor as mounted for this recording; the verdict is indeterminate "
                   "when the baseline's HF band reaches above it")
        ->check(kDecimal)->check(CLI::Range(100.0, 1.0e6));
    an->add_option("--mount", ao.mount, "Sensor mounting for this recording: handheld, magnet, adhesive or stud (see baseline --help)")
        ->check(CLI::IsMember({"handheld", "magnet", "adhesive", "stud"}));
    an->add_option("--zones", ao.zones,
                   "TOML file of severity zone boundaries (source = \"standard, part, edition, class\", "
                   "a_b_mm_s, b_c_mm_s, c_d_mm_s, optional band_hz = [10, 1000]): the overall velocity's zone is "
                   "printed as context; it never changes the cavitation verdict")
        ->type_name("FILE");
    an->add_option("--limits", ao.limits,
                   "TOML file of this point's own alert limits, for a point always noisier than the defaults suit "
                   "(reason = \"why\", hf_alert_db = 5, hf_developed_db = 12, lf_alert_db = 6; dB re baseline). "
                   "Default: BASELINE.limits.toml beside the baseline when there is one (a route reads "
                   "BASELINES/MACHINE/POINT.limits.toml). The finding says which limits it used")
        ->type_name("FILE");
    add_operating_point_flags(an, ao.operating, true);
    std::optional<std::string> an_analyst;
    add_analyst_flag(an, an_analyst, "the finding's \"provenance\"");

    ScreenOptions so;
    auto* sc = app.add_subcommand(
        "screen",
        "Screen one recording of a machine that has no reference yet (a new installation, a pump that has\n"
        "cavitated since commissioning). Without a known-good state no change can be measured, so the answer\n"
        "is never incipient or developed, only: signs of cavitation, no sign of cavitation, or cannot tell,\n"
        "with a low or moderate grade. Three acoustic signs are read from the recording alone:\n"
        "  HF dominance           the HF band's power within 3 dB of the band below it (broadband collapse\n"
        "                         noise; sound pumps read 6-10 dB under it)\n"
        "  blade-pass modulation  the HF envelope's line at BPF (needs --rpm or a confirmed speed, and --vanes)\n"
        "  sparse impulses        HF band kurtosis of 10 or more (Gaussian = 3)\n"
        "Two are needed: many sound machines show one. A bearing-like family at a non-integer order claims the\n"
        "impulses and the modulation. With the operating point given, NPSHa under NPSH3 or under 1 m (the\n"
        "liquid near its boiling point) is a sign on its own. Then take a reference: 'baseline' when known\n"
        "good, 'baseline --suppression' from a run with raised suction head, or 'analyze --reference' with a\n"
        "sister machine's baseline. --json writes cavitas.screening/1, whose \"screening\" key is exactly one of\n"
        "signs_of_cavitation, no_sign, cannot_tell. Exit status 0 whatever the answer; 1 input, 2 usage error.");
    sc->add_option("recording", so.recording, "The recording to screen")->required();
    sc->add_option("--rpm", so.rpm, "Shaft speed, rpm (default: searched in the spectrum, 300-6000 rpm, and used only "
                                    "when its lines confirm it)")
        ->check(kDecimal)->check(CLI::Range(1.0, 100000.0));
    sc->add_option("--vanes", so.vanes, "Impeller vanes (runner blades): blade-pass frequency = vanes x rpm / 60; "
                                        "without it the HF envelope is read at 1x")
        ->check(CLI::Range(0, 200));
    std::string sc_channels;
    add_reading_flags(sc, sc_channels, so.calibration, so.read, ReadingRole::screen);
    sc->add_option("--sensor-max-hz", so.sensor_max_hz, "Usable top frequency of the sensor as mounted; the HF band "
                                                        "stops there")
        ->check(kDecimal)->check(CLI::Range(100.0, 1.0e6));
    sc->add_option("--mount", so.mount, "Sensor mounting: handheld, magnet, adhesive or stud (caps the HF band)")
        ->check(CLI::IsMember({"handheld", "magnet", "adhesive", "stud"}));
    sc->add_option("--json", so.json_output, "Write the screening as JSON to this file (atomically)")->type_name("FILE");
    add_operating_point_flags(sc, so.operating, true);
    std::optional<std::string> sc_analyst;
    add_analyst_flag(sc, sc_analyst, "the screening's \"provenance\"");

    InfoOptions io;
    auto* inf = app.add_subcommand(
        "info",
        "What recordings hold, before judging them: format, channels (a sound file's channels, a UFF\n"
        "file's datasets 58, a CSV waveform's columns, a MATLAB file's variables), sample rate,\n"
        "length and the unit the file states for its values. Reads every format analyze reads.");
    inf->add_option("files", io.files, "Recordings (WAV/FLAC, UFF 58/58b, CSV, MATLAB .mat)")->required();
    inf->add_option("--sample-rate", io.read.sample_rate_hz, "Sample rate, Hz, of a file that does not state it")
        ->check(kDecimal)->check(CLI::Range(1.0, 1.0e7));
    add_csv_flags(inf, io.read);
    inf->add_option("--json", io.json_output, "Also write what was found as JSON to this file (atomically)")
        ->type_name("FILE");

    NpshOptions no;
    auto* np = app.add_subcommand("npsh", kNpshHelp);
    add_operating_point_flags(np, no.operating, false);
    np->add_option("--json", no.json_output, "Write the result as JSON to this file (atomically)")->type_name("FILE");

    RouteOptions ro;
    auto* rt = app.add_subcommand(
        "route",
        "Analyse every recording of a route manifest against its point's baseline, on all cores.\n"
        "The manifest is a CSV with a header row naming at least the columns file (relative to the\n"
        "manifest), machine, point, channel, datetime (ISO 8601), rpm and vanes, in any order; the\n"
        "operating-point keys (suction_pressure, temperature, flow, ...) and full_scale, mount,\n"
        "sensor_max_hz may be columns too; other columns are passed through. The baseline of machine M\n"
        "at point P is BASELINES/M/P.json. Writes OUT/summary.csv and OUT/summary.jsonl (one row per\n"
        "manifest row, failures with their reason), OUT/findings/ (each recording's JSON finding) and\n"
        "OUT/route.json, records every analysed recording in the results store, and prints the latest\n"
        "state of each machine point, worst first. A bad row never stops the others; the exit status is\n"
        "1 when any row failed. Run again into the same OUT, analyst reviews there ('cavitas review') follow\n"
        "each finding made again from the same recording, channel and baseline with the same verdict; any\n"
        "other review stops the run before OUT is replaced, naming it (--discard-reviews drops them).\n"
        "An event column records a repair in the store at the row's datetime\n"
        "(a row with an event and no file is an event only; see 'cavitas event').");
    rt->add_option("manifest", ro.manifest, "Route manifest (CSV)")->required()->type_name("MANIFEST.csv");
    rt->add_option("--out", ro.out_dir, "Output folder (created when missing)")->required()->type_name("DIR");
    rt->add_option("--baselines", ro.baselines, "Baseline library: BASELINES/MACHINE/POINT.json")->required()->type_name("DIR");
    rt->add_option("--store", ro.store, "Results store (SQLite), created on first use; default BASELINES/history.sqlite")
        ->type_name("FILE");
    rt->add_flag("--no-store", ro.no_store, "Do not record the results in the store");
    rt->add_option("--zones", ro.zones,
                   "Severity zone file (TOML, as analyze --zones) for every row's overall velocity; default "
                   "BASELINES/severity_zones.toml when it exists. Context only: verdicts do not depend on it")
        ->type_name("FILE");
    rt->add_option("--jobs", ro.jobs, "Recordings analysed at once (default: one per core)")->check(CLI::Range(1, 1024));
    rt->add_option("--shard", ro.shard,
                   "Analyse only share K of N of the manifest rows (rows K, K+N, K+2N, ...), e.g. 2/8 in a cluster job "
                   "array; the store is not written, 'cavitas merge' joins the shards")
        ->type_name("K/N");
    add_analyst_flag(rt, ro.analyst, "route.json and every finding");
    rt->add_flag("--discard-reviews", ro.discard_reviews,
                 "Replace OUT even where analyst reviews (findings/NAME.reviews.json) cannot follow their findings; "
                 "without it such a run stops before OUT is replaced, naming them. Reviews of findings made again "
                 "from the same recording, channel and baseline with the same verdict always follow them");

    MergeOptions mo;
    auto* mg = app.add_subcommand("merge",
                                  "Join the output folders of 'route --shard K/N' runs of one manifest into one summary,\n"
                                  "as one run without shards would have written it, and record it in the store.");
    mg->add_option("shards", mo.shard_dirs, "Output folders of the shards")->required()->type_name("DIR...");
    mg->add_option("--out", mo.out_dir, "Output folder for the merged summary and findings")->required()->type_name("DIR");
    std::optional<std::string> merge_store;
    mg->add_option("--store", merge_store, "Results store to record the merged route in (SQLite)")->type_name("FILE");
    add_analyst_flag(mg, mo.analyst, "route.json");
    mg->add_flag("--discard-reviews", mo.discard_reviews,
                 "Replace OUT even where analyst reviews cannot follow their findings (as route --discard-reviews)");

    AnalystReviewOptions arv;
    auto* rv = app.add_subcommand("review", kReviewHelp);
    rv->add_option("finding", arv.finding, "The finding: analyze --json, or a route's findings/NAME.json")
        ->required()
        ->type_name("FINDING.json");
    rv->add_flag("--agree", arv.agree, "Agree with the finding's verdict");
    rv->add_option("--override", arv.override_verdict,
                   "Override the verdict: normal, incipient, developed or indeterminate (needs --reason)")
        ->type_name("VERDICT");
    rv->add_option("--reason", arv.reason, "Why: what you saw or know that the recording does not say")->type_name("TEXT");
    add_analyst_flag(rv, arv.analyst, "the review");

    ExportOptions xo;
    auto* ex = app.add_subcommand("export", kExportHelp);
    ex->add_option("route", xo.route_dir, "A route's output folder (route --out DIR)")->required()->type_name("ROUTE_DIR");
    ex->add_option("--work-requests", xo.work_requests, "Work requests to write: OUT.csv or OUT.json (atomically)")
        ->required()
        ->type_name("OUT");

    TrendOptions to;
    auto* tr = app.add_subcommand(
        "trend",
        "The history of a machine's measurement points from the results store: the HF level over the\n"
        "baseline, verdicts, impulse rate and NPSH margin per visit, and whether the HF level is rising\n"
        "(Theil-Sen slope and a one-sided Mann-Kendall test over the last visits) before it crosses\n"
        "into an incipient verdict. Each point is judged on the visits at or after its last maintenance\n"
        "event ('cavitas event'); the events are listed between the visits.\n"
        "\n"
        "  cavitas trend OW-P101 DE-H --baselines lib --json trend.json");
    tr->add_option("machine", to.machine, "Machine tag")->required();
    tr->add_option("point", to.point, "Measurement point (default: every point of the machine)");
    tr->add_option("--store", to.store, "Results store (SQLite) written by 'route'")->type_name("FILE");
    tr->add_option("--baselines", to.baselines, "Baseline library whose history.sqlite to read")->type_name("DIR");
    tr->add_option("--json", to.json_output, "Write the history and the trend as JSON")->type_name("FILE");
    tr->add_option("--csv", to.csv_output, "Write the history as CSV")->type_name("FILE");
    tr->add_option("--window", to.window, "Visits judged for the trend (default 6)")->check(CLI::Range(4, 1000));

    EventOptions eo;
    auto* ev = app.add_subcommand(
        "event",
        "Record a repair or change of a machine in the results store: a replaced impeller, a cleaned\n"
        "strainer, a re-set level control. From then on 'trend' judges the point on the visits since its\n"
        "last event (a slope never runs through a repair), the route's change since the previous visit\n"
        "stops at it, report charts mark it, and 'compare --around-event' compares the visits either side.\n"
        "Without POINT the event concerns every point of the machine. Recording the same event again adds\n"
        "nothing. A route manifest's event column records events too.\n"
        "\n"
        "  cavitas event OW-P101 --date 2026-11-04 --what \"impeller replaced\" --baselines lib\n"
        "  cavitas event OW-P101 DE-H --date 2026-11-04T14:30 --what \"sensor re-mounted\" --store history.sqlite\n"
        "  cavitas event OW-P101 --list --baselines lib");
    ev->add_option("machine", eo.machine, "Machine tag, as the route manifest names it")->required();
    ev->add_option("point", eo.point, "Measurement point (default: every point of the machine)");
    ev->add_option("--date", eo.date,
                   "When the work was done, ISO 8601: a date (2026-11-04, taken as its midnight) or a date-time "
                   "(2026-11-04T14:30); visits at or after it count as after it")
        ->type_name("DATE");
    ev->add_option("--what", eo.what, "What was done, in a few words (one line)")->type_name("TEXT");
    ev->add_flag("--list", eo.list, "List the machine's events (with POINT: that point's and the machine's) and their numbers");
    ev->add_option("--store", eo.store, "Results store (SQLite) written by 'route'")->type_name("FILE");
    ev->add_option("--baselines", eo.baselines, "Baseline library whose history.sqlite to use")->type_name("DIR");

    CompareOptions co;
    auto* cp = app.add_subcommand(
        "compare",
        "Did a repair or an operating change work? Recordings of one machine and point before and after,\n"
        "each judged against the same baseline; for each key indicator the change (Hodges-Lehmann shift\n"
        "with its 95 % interval), a Mann-Whitney U test on the 1 s segments and Cliff's delta; the verdict\n"
        "is improved, unchanged (no significant change) or worse. Warns when the operating points before\n"
        "and after differ enough to explain the change. The sides are recordings you name, or the visits\n"
        "the results store holds either side of a maintenance event ('cavitas event').\n"
        "\n"
        "  cavitas compare --baseline lib/OW-P101/DE-H.json --before 2026-11-02.wav --after 2026-11-09.wav\n"
        "  cavitas compare --around-event 2026-11-04 --machine OW-P101 --point DE-H --baselines lib");
    cp->add_option("--baseline", co.baseline,
                   "Baseline of the machine and point (with --around-event: default, the one the visits were judged "
                   "against)")
        ->type_name("FILE");
    cp->add_option("--before", co.before, "Recordings before the change")->type_name("REC...");
    cp->add_option("--after", co.after, "Recordings after the change")->type_name("REC...");
    cp->add_option("--around-event", co.around_event,
                   "Instead of --before and --after: the visits either side of a maintenance event in the results "
                   "store (its number from 'cavitas event MACHINE --list', or its date with --machine): the point's "
                   "last --visits before it and its first --visits at or after it")
        ->type_name("ID|DATE");
    cp->add_option("--store", co.store, "Results store (SQLite) for --around-event")->type_name("FILE");
    cp->add_option("--baselines", co.baselines, "Baseline library whose history.sqlite --around-event reads")
        ->type_name("DIR");
    cp->add_option("--point", co.point,
                   "Measurement point for --around-event (default: the event's, or the machine's only point)");
    cp->add_option("--visits", co.visits, "Visits a side with --around-event (default 1)")->type_name("N")->check(CLI::Range(1, 100));
    cp->add_option("--machine", co.machine, "Machine tag; refused when the baseline names another");
    cp->add_option("--rpm", co.rpm, "Shaft speed of all the recordings, rpm (default: each one's sidecar, else estimated)")
        ->check(kDecimal)->check(CLI::Range(1.0, 100000.0));
    cp->add_option("--vanes", co.vanes, "Impeller vanes (default: the baseline's)")->check(CLI::Range(0, 200));
    cp->add_option("--channel", co.channel, "Channel to read, from 0")->check(CLI::NonNegativeNumber);
    cp->add_option("--json", co.json_output, "Write the comparison as JSON")->type_name("FILE");

    ReportOptions rpo;
    auto* rp = app.add_subcommand(
        "report",
        "A work-order report: a self-contained HTML page (no external fonts, scripts or images; prints to A4\n"
        "and Letter) and a PDF of the same content, from a finding (analyze --json), a route output folder,\n"
        "a before/after comparison (compare --json) or an acoustic NPSH test (inception --json). It leads\n"
        "with the verdict in plain words, what to do next and the cautions, then the evidence: the spectrum\n"
        "against the baseline, the envelope spectrum with 1X and BPF marked, the kurtogram, the indicator\n"
        "table, the route's table worst first and each point's history, a sweep's levels and head against\n"
        "NPSHa, and where every number came from.");
    rp->add_option("input", rpo.input, "finding JSON, route output folder, compare JSON or inception JSON")->required()->type_name("INPUT");
    rp->add_option("--html", rpo.html, "HTML report to write")->type_name("FILE");
    rp->add_option("--pdf", rpo.pdf, "PDF report to write")->type_name("FILE");
    rp->add_option("--work-order", rpo.work_order, "Work-order number for the header");
    rp->add_option("--site", rpo.site, "Site for the header");
    rp->add_option("--analyst", rpo.analyst, "Analyst for the header");
    rp->add_option("--machine", rpo.machine, "Machine tag for the header (default: from the input)");
    rp->add_option("--point", rpo.point, "Measurement point for the header");
    rp->add_option("--date", rpo.date, "Date of the recording for the header");
    rp->add_option("--paper", rpo.paper, "PDF paper: a4 (default) or letter")->check(CLI::IsMember({"a4", "letter"}));
    rp->add_option("--store", rpo.store, "Results store for the history charts of a route (default: the route's)")
        ->type_name("FILE");

    InceptionOptions ino;
    auto* inc = app.add_subcommand("inception", kInceptionHelp);
    inc->add_option("sweep", ino.sweep, "The sweep: a route manifest of one machine, point and channel at falling suction "
                                        "pressure")
        ->required()
        ->type_name("SWEEP.csv");
    inc->add_option("--json", ino.json_output, "Write the result as JSON (cavitas.inception/1) to this file (atomically)")
        ->type_name("FILE");
    inc->add_option("--html", ino.html, "Write the report as a self-contained HTML page")->type_name("FILE");
    inc->add_option("--pdf", ino.pdf, "Write the report as PDF")->type_name("FILE");
    inc->add_option("--paper", ino.paper, "PDF paper: a4 (default) or letter")->check(CLI::IsMember({"a4", "letter"}));
    inc->add_option("--at-rpm", ino.at_rpm,
                    "Read the sweep at this shaft speed, rpm (default: the highest-NPSHa step's; steps within 1 % of it "
                    "are not scaled)")
        ->check(kDecimal)->check(CLI::Range(1.0, 100000.0));
    inc->add_option("--sensor-max-hz", ino.sensor_max_hz,
                    "Usable top frequency of the sensor as mounted; the HF band stops there (default: the first row's "
                    "sensor_max_hz)")
        ->check(kDecimal)->check(CLI::Range(100.0, 1.0e6));
    inc->add_option("--mount", ino.mount, "Sensor mounting, caps the HF band: handheld, magnet, adhesive or stud")
        ->check(CLI::IsMember({"handheld", "magnet", "adhesive", "stud"}));
    inc->add_option("--replicates", ino.replicates, "Resampled sweeps for the interval (default 1000)")
        ->check(CLI::Range(100, 100000));

    try {
        app.parse(argc, argv);
    } catch (const CLI::ParseError& e) {
        const int rc = app.exit(e);
        return rc == 0 ? 0 : static_cast<int>(ExitCode::usage_error);
    }
    // The FFT plans this run made are kept for the next one, however it ends
    // (src/io/plan_store.hpp; nothing happens when no recording was analysed).
    struct SavePlans {
        ~SavePlans() { save_fft_plans(); }
    } save_plans;
    try {
        if (*base) {
            if (bo.rpms.size() == 1) {  // one speed for every recording
                bo.rpm = bo.rpms.front();
                bo.rpms.clear();
            }
            set_channels(base_channels, bo.read, bo.channels);
            run_baseline(bo, std::cout, std::cerr);
        }
        if (*an) {
            if (ao.baseline.empty() == an_reference.empty())
                throw UsageError(ao.baseline.empty()
                                     ? "analyze needs --baseline (this machine's known-good state or suppression run) "
                                       "or --reference (a sister machine's baseline); with neither, 'cavitas screen' "
                                       "judges the recording on its own"
                                     : "--baseline and --reference: give one");
            if (!an_reference.empty()) {
                ao.baseline = an_reference;
                ao.sister_reference = true;
            }
            std::optional<ChannelSelection> channels;
            set_channels(an_channels, ao.read, channels);
            ao.analyst = identify_analyst(an_analyst);
            run_analyze(ao, channels, std::cout, std::cerr);
        }
        if (*sc) {
            std::optional<ChannelSelection> several;
            set_channels(sc_channels, so.read, several);
            if (several) throw UsageError("--channel: screen reads one channel; screen each channel on its own");
            so.analyst = identify_analyst(sc_analyst);
            run_screen(so, std::cout, std::cerr);
        }
        if (*np) run_npsh(no, std::cout);
        if (*inf) run_info(io, std::cout);
        if (*rt) return run_route(ro, std::cout, std::cerr);
        if (*mg) {
            mo.store = merge_store;
            mo.no_store = !merge_store;
            return run_merge(mo, std::cout, std::cerr);
        }
        if (*rv) run_analyst_review(arv, std::cout);
        if (*ex) run_export(xo, std::cout);
        if (*tr) run_trend(to, std::cout);
        if (*ev) run_event(eo, std::cout, std::cerr);
        if (*cp) run_compare(co, std::cout, std::cerr);
        if (*rp) run_report(rpo, std::cout);
        if (*inc) run_inception(ino, std::cout, std::cerr);
        return static_cast<int>(ExitCode::ok);
    } catch (const UsageError& e) {
        std::cerr << "cavitas: usage: " << one_line(e.what()) << "\n";
        return static_cast<int>(ExitCode::usage_error);
    } catch (const InputError& e) {
        std::cerr << "cavitas: error: " << one_line(e.what()) << "\n";
        return static_cast<int>(ExitCode::input_error);
    } catch (const std::exception& e) {
        std::cerr << "cavitas: error: " << one_line(e.what()) << "\n";
        return static_cast<int>(ExitCode::input_error);
    }
}
