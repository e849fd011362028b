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
    "with the evidence in numbers.\n"
    "\n"
    "  cavitas baseline --rpm 1485 --vanes 7 --full-scale 50g -o P101.json good1.wav good2.wav\n"
    "  cavitas analyze  --baseline P101.json --rpm 1490 --json finding.json today.wav\n"
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

    try {
        app.parse(argc, argv);
    } catch (const CLI::ParseError& e) {
        const int rc = app.exit(e);
        return rc == 0 ? 0 : static_cast<int>(ExitCode::usage_error);
    }
    try {
        if (*base) run_baseline(bo, std::cout, std::cerr);
        if (*an) run_analyze(ao, std::cout, std::cerr);
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
