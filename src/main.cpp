// cavitas: is this pump or turbine cavitating, judged against its own baseline?
#include <CLI/CLI.hpp>

#include <iostream>

#include "src/commands.hpp"
#include "src/errors.hpp"

using namespace cavitas::app;

namespace {

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
    "\n"
    "Exit status: 0 a verdict was reached (indeterminate included), 1 unreadable or\n"
    "invalid input, 2 a usage error.";

// Errors are one line: control characters (a newline in a file name) are shown escaped.
std::string one_line(const std::string& s) {
    std::string o;
    for (char c : s) {
        if (c == '\n') o += "\\n";
        else if (c == '\r') o += "\\r";
        else if (static_cast<unsigned char>(c) < 0x20) o += '?';
        else o += c;
    }
    return o;
}

// The operating-point flags, the same on every command that takes them.
// beside_recording: the command reads NAME.op.toml beside each recording by default.
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

}  // namespace

int main(int argc, char** argv) {
    CLI::App app{kIntro, "cavitas"};
    app.require_subcommand(1);
    app.set_version_flag("--version", std::string("cavitas ") + kVersion);
    app.footer("Run 'cavitas COMMAND --help' for the options of each command.");

    BaselineOptions bo;
    auto* base = app.add_subcommand(
        "baseline",
        "Learn a machine's known-good reference from one or more recordings of the same machine,\n"
        "measurement point and operating point. Each recording is cut into 1 s segments and every\n"
        "indicator's median and spread (1.4826 x MAD) over all segments is stored, with the bands\n"
        "used, the speed, the vane count and the calibration. Use recordings made while the\n"
        "machine was known to be healthy at its usual duty point; not just after a repair or a\n"
        "start-up while it settles.");
    base->add_option("recordings", bo.recordings, "Known-good recordings (WAV, FLAC, ... any libsndfile format)")
        ->required();
    base->add_option("-o,--output", bo.output, "Baseline file to write (JSON); written atomically")->required();
    base->add_option("--machine", bo.machine,
                     "Tag of the machine and measurement point (e.g. OW-P101-NDE-H), stored in the baseline");
    base->add_option("--rpm", bo.rpm, "Shaft speed during the recordings, rpm; without it the speed is estimated "
                                      "from the spectrum")
        ->check(CLI::Range(1.0, 100000.0));
    base->add_option("--vanes", bo.vanes, "Impeller vanes (runner blades): blade-pass frequency = vanes x rpm / 60")
        ->check(CLI::Range(0, 200));
    base->add_option("--channel", bo.channel, "Channel to read from multichannel files, from 0")->check(CLI::NonNegativeNumber);
    base->add_option("--full-scale", bo.full_scale,
                     "What a full-scale sample means, e.g. 50g, 500m/s2, 2000Pa (hydrophone); without it "
                     "levels stay in full-scale units (FS). Analyses use the baseline's calibration.");
    base->add_option("--sensor-max-hz", bo.sensor_max_hz,
                     "Usable top frequency of the sensor as mounted; the HF band stops there")
        ->check(CLI::Range(100.0, 1.0e6));
    base->add_option("--mount", bo.mount,
                     "Sensor mounting, caps the HF band: handheld (2 kHz), magnet (5 kHz), adhesive (6 kHz), stud (7 kHz)")
        ->check(CLI::IsMember({"handheld", "magnet", "adhesive", "stud"}));
    base->add_option("--segment", bo.segment_s, "Analysis segment length, s (default 1)")->check(CLI::Range(0.25, 10.0));
    add_operating_point_flags(base, bo.operating, true);

    AnalyzeOptions ao;
    auto* an = app.add_subcommand(
        "analyze",
        "Judge one recording against a baseline of the same machine and point. Prints a short\n"
        "summary; --json writes the full finding (verdict, confidence, evidence, other findings,\n"
        "every indicator beside its baseline, quality and the input's SHA-256) for a work order.");
    an->add_option("recording", ao.recording, "The recording to judge")->required();
    an->add_option("--baseline", ao.baseline, "Baseline file made by 'cavitas baseline'")->required();
    an->add_option("--machine", ao.machine,
                   "Tag of the machine and point recorded; refused when the baseline names another");
    an->add_option("--rpm", ao.rpm,
                   "Shaft speed during this recording, rpm (may differ from the baseline's by a few percent: "
                   "lines are compared in orders); without it the speed is estimated near the baseline's")
        ->check(CLI::Range(1.0, 100000.0));
    an->add_option("--vanes", ao.vanes, "Impeller vanes (default: the baseline's)")->check(CLI::Range(0, 200));
    an->add_option("--channel", ao.channel, "Channel to read, from 0")->check(CLI::NonNegativeNumber);
    an->add_option("--full-scale", ao.full_scale, "Calibration of this file if it differs in form from the "
                                                  "baseline's (default: the baseline's)");
    an->add_option("--json", ao.json_output, "Write the finding as JSON to this file (atomically)");
    an->add_option("--sensor-max-hz", ao.sensor_max_hz,
                   "Usable top frequency of the sensor as mounted for this recording; the verdict is indeterminate "
                   "when the baseline's HF band reaches above it")
        ->check(CLI::Range(100.0, 1.0e6));
    an->add_option("--mount", ao.mount, "Sensor mounting for this recording: handheld, magnet, adhesive or stud (see baseline --help)")
        ->check(CLI::IsMember({"handheld", "magnet", "adhesive", "stud"}));
    add_operating_point_flags(an, ao.operating, true);

    NpshOptions no;
    auto* np = app.add_subcommand("npsh", kNpshHelp);
    add_operating_point_flags(np, no.operating, false);
    np->add_option("--json", no.json_output, "Write the result as JSON to this file (atomically)")->type_name("FILE");

    try {
        app.parse(argc, argv);
    } catch (const CLI::ParseError& e) {
        const int rc = app.exit(e);
        return rc == 0 ? 0 : static_cast<int>(ExitCode::usage_error);
    }
    try {
        if (*base) run_baseline(bo, std::cout, std::cerr);
        if (*an) run_analyze(ao, std::cout, std::cerr);
        if (*np) run_npsh(no, std::cout);
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
