// cavitas-synth: writes synthetic, labelled accelerometer recordings of the
// invented Orrin Weir pumps, for the demo set, the evaluation set and benchmarks.
#include <CLI/CLI.hpp>

#include <unistd.h>

#include <cstdint>
#include <cstdio>
#include <exception>
#include <filesystem>
#include <iostream>
#include <string>
#include <vector>

#include "tools/synth/sweep.hpp"
#include "tools/synth/synth.hpp"

namespace synth = cavitas::synth;

namespace {

std::string machine_list() {
    std::string s;
    for (const auto& m : synth::every_machine()) {
        char line[200];
        std::snprintf(line, sizeof line, "\n  %s  %-22s %5.0f rpm, %d vanes, recorded at %.0f Hz", m.tag.c_str(),
                      m.duty.c_str(), m.rpm, m.vanes, m.fs_hz);
        s += line;
    }
    return s + "\n  (OW-P104 is in the field set only; its speed varies, nominal shown)";
}

void print_summary(const char* what, const std::filesystem::path& dir, const synth::SetSummary& s) {
    std::cerr << what << ": wrote " << s.files << " recordings (" << (static_cast<double>(s.bytes) / 1.0e6)
              << " MB) and manifest.csv, truth.csv to " << dir.string() << '\n';
    if (s.clipped_files > 0) std::cerr << what << ": warning: " << s.clipped_files << " files were clipped\n";
}

}  // namespace

int main(int argc, char** argv) {
    CLI::App app{"cavitas-synth: synthetic, labelled pump accelerometer recordings (values in g).\n\n"
                 "Every recording is made of shaft tones (1x, 2x, 3x), blade-pass tones (BPF = vanes x rpm / 60,\n"
                 "and 2x BPF), a coloured broadband background and three structural resonances of the machine,\n"
                 "plus one 'kind' of condition:\n"
                 "  healthy     nothing else (label normal)\n"
                 "  incipient   sparse bubble-collapse impulses, rate modulated by blade passage: the band\n"
                 "              0.2..0.45 fs rises 3.5..7.5 dB and turns impulsive (label incipient)\n"
                 "  developed   dense, overlapping collapses: that band rises 11..24 dB, nearly Gaussian but\n"
                 "              still BPF-modulated, and 0..1 kHz rises 2..4 dB (label developed)\n"
                 "  bearing     outer-race defect impacts at a non-integer shaft order (label normal)\n"
                 "  turbulence  extra flow noise in 20..800 Hz, +6..12 dB below 1 kHz (label normal)\n"
                 "  mains       50 Hz electrical pickup and its harmonics (label normal)\n"
                 "  speed       shaft speed 2..4 % off nominal, otherwise healthy (label normal)\n"
                 "  inner_race  inner-race defect impacts at a non-integer order (4.6..6.4), their strength\n"
                 "              swept by the shaft's load zone once a revolution: HF +6..15 dB, envelope\n"
                 "              lines at 1x and BPFI +- 1x (label normal; field set and 'one' only)\n\n"
                 "Scenario (invented): Lowmere Water Trust, Orrin Weir pumping station. Machines:" +
                 machine_list() +
                 "\n\nFiles are 16-bit PCM WAV unless told otherwise, full scale 50 g (sample = g / 50).\n"
                 "The same seed always gives bit-identical files."};
    app.require_subcommand(1);

    // demo
    std::string demo_dir;
    std::uint64_t demo_seed = 20240611;
    auto* demo = app.add_subcommand(
        "demo",
        "Write the small demo route (about 9.5 MB): OW-P101 with 2 baselines and visits on 2026-09-07 (healthy), "
        "10-05 (incipient), 11-02 (developed) and, after a repair, 11-09 (healthy); OW-P102 with 2 baselines, "
        "turbulence and developed cavitation at part load; OW-P103 with 2 baselines and a bearing look-alike. 8 s "
        "each, 16-bit PCM, named like OW-P101_baseline_1.wav and OW-P101_2026-10-05.wav, each with its operating "
        "point in NAME.op.toml; then OW-P101's triaxial point NDE-T (12 800 Hz, 4 s, three axes): 2 baselines as "
        "UFF 58b in volts (100 mV/g), the developed visit of 11-02 as a MAT-file (N x 3 volts, acc and fs) and the "
        "visit of 11-09 as a CSV waveform in m/s^2; the NPSH3 curves TAG.npsh3.csv; route manifests manifest.csv "
        "(all), baselines.csv and route.csv (with the columns sensitivity, unit, variable, sample_rate_hz and event, "
        "the channel list \"0,1,2\" of the triaxial rows, and at its end an event row: OW-P101's repair of "
        "2026-11-04); and truth.csv (a row per axis, FILE#CHANNEL).");
    demo->add_option("OUTDIR", demo_dir, "Folder to write into (created if missing)")->required();
    demo->add_option("--seed", demo_seed, "Master seed of the set")->capture_default_str();

    // eval
    std::string eval_dir;
    int per_kind = 6;
    std::uint64_t eval_seed = 1;
    auto* eval = app.add_subcommand(
        "eval",
        "Write the labelled evaluation set: for each of the three machines 3 baseline recordings (healthy) and N "
        "tests of every kind, 10 s each, severities spread evenly over each kind's range. Tests have blind names "
        "(OW-P101_test_017.wav) in shuffled order; the truth is in manifest.csv (label, kind) and truth.csv "
        "(fault parameters). Encodings cycle through 16-bit PCM, 24-bit PCM, 32-bit float WAV and 16-bit FLAC.");
    const std::string set_footer =
        "The manifests are route manifests (cavitas route): manifest.csv (every recording), baselines.csv and "
        "route.csv, columns file (relative to the folder), machine, point, channel, datetime, rpm (true shaft "
        "speed), vanes, full_scale (50g: g at sample value 1.0), then role (baseline or test), label (normal, "
        "incipient or developed: the truth a detector must give), kind (which signal was made), fs_hz, "
        "duration_s, seed. truth.csv holds each recording's severity and fault parameters; `cavitas-synth one "
        "--machine M --kind K --seconds D --seed S --severity X` reproduces a recording's samples.";
    demo->footer(set_footer);
    eval->footer(set_footer);
    eval->add_option("OUTDIR", eval_dir, "Folder to write into (created if missing)")->required();
    eval->add_option("--per-kind", per_kind, "Test recordings of each kind per machine")
        ->check(CLI::Range(1, 1000))
        ->capture_default_str();
    eval->add_option("--seed", eval_seed, "Master seed of the set")->capture_default_str();

    // field
    std::string field_dir;
    std::uint64_t field_seed = 20260301;  // field_plan()'s default
    auto* field = app.add_subcommand(
        "field",
        "Write the field set (183 recordings, about 113 MB, some 11 s on one core): what a route meets beyond the evaluation set. Groups, "
        "each judged against its own baseline: P104-vsd (OW-P104 on a variable-speed drive: baselines at 0.70, "
        "0.85 and 1.00 x 1780 rpm; tests of every kind, inner_race included, at 0.75..0.95 x; and at 0.50 x and "
        "1.25 x, outside what the baseline covers: indeterminate due); P101-visits (4 baseline visits, the magnet "
        "re-mounted each time: gain +-2.5 dB, tilt +-1 dB/decade about 1 kHz; tests re-mounted again); spoiled "
        "baselines of one or two recordings on OW-P101..P103, four groups of each hazard - step (the HF background "
        "rises 8..20 dB at 40..70 % of the record), cavitating (the known-good recording is incipient or "
        "developed), low_npsh (its sidecar NAME.op.toml states suction conditions with NPSHa 0.1..0.8 m), short "
        "(a single 2 s recording) - and clean control groups (none: no warning due); P101/P102/P103-ref (3 sound "
        "baselines each) with inner-race tests, tests whose speed the tool must find itself, and 1..2 s captures "
        "of every kind; P104-fixed (the drive held at 0.90 x, tests without the speed, some after a 15..25 % "
        "speed jump: indeterminate due). Every OW-P104 recording scales its levels with speed: (rpm / 1780)^2.5 "
        "in the HF band, ^2 below 1 kHz and for the tones. Recordings are 10 s unless said; tests have blind "
        "names (P101-visits_test_07.wav); encodings cycle as in the eval set.");
    field->footer(
        "The manifests have the columns of the demo and eval sets, then: group (the baseline a recording belongs "
        "to, role baseline, or is judged against, role test), rpm_given (1: the evaluator gives the analysis the "
        "true rpm; 0: the tool must find the speed itself - the rpm column still holds the true speed), expect "
        "(the verdict a correct tool gives: normal, incipient, developed or indeterminate; for baselines, their "
        "label) and hazard (baselines: what a correct baseline check warns about - none, step, cavitating, "
        "low_npsh or short; tests: none). truth.csv adds the inner-race parameters, the speed exponents, the "
        "re-mount's gain and tilt, the step, and the NPSHa each sidecar states (computed as cavitas does: IAPWS-IF97 "
        "water, ISO 2533 atmosphere). `cavitas-synth one` reproduces a recording without a re-mount, a step or "
        "speed scaling (--rpm for the true speed); the others are CaseSpec values of the library.");
    field->add_option("OUTDIR", field_dir, "Folder to write into (created if missing)")->required();
    field->add_option("--seed", field_seed, "Master seed of the set")->capture_default_str();

    // one
    std::string tag = "OW-P101", kind_name = "healthy", out_file, encoding_name;
    double seconds = 10.0, fs_hz = 0.0, severity = 0.5, rpm = 0.0;
    std::uint64_t seed = 1;
    auto* one = app.add_subcommand(
        "one",
        "Write one recording, e.g. for benchmarks: cavitas-synth one --machine OW-P101 --kind developed "
        "--seconds 60 --fs 96000 --seed 7 -o FILE.wav");
    std::vector<std::string> tags, kinds;
    for (const auto& m : synth::every_machine()) tags.push_back(m.tag);
    for (auto k : synth::kEveryKind) kinds.push_back(synth::name_of(k));
    one->add_option("--machine", tag, "Machine tag")->check(CLI::IsMember(tags))->capture_default_str();
    one->add_option("--kind", kind_name, "Condition to synthesize (see cavitas-synth --help)")
        ->check(CLI::IsMember(kinds))
        ->capture_default_str();
    one->add_option("--seconds", seconds, "Duration in seconds")->check(CLI::Range(0.01, 7200.0))->capture_default_str();
    one->add_option("--fs", fs_hz,
                    "Sample rate in Hz (default: the machine's). The structural resonances keep the same fraction "
                    "of the sample rate, so band statistics compare across rates; tones stay at their true Hz")
        ->check(CLI::Range(8000.0, 1.0e6));
    one->add_option("--seed", seed, "Random seed (same seed, same file)")->capture_default_str();
    one->add_option("--severity", severity, "0..1 across the kind's range (see the library's draw_params)")
        ->check(CLI::Range(0.0, 1.0))
        ->capture_default_str();
    one->add_option("--rpm", rpm, "True shaft speed in rpm (default: nominal, or nominal +-2..4 % for kind speed)")
        ->check(CLI::Range(60.0, 60000.0));
    one->add_option("--encoding", encoding_name,
                    "pcm16, pcm24, float (32-bit float WAV) or flac16 (default: flac16 for a .flac name, else pcm16)")
        ->check(CLI::IsMember({"pcm16", "pcm24", "float", "flac16"}));
    one->add_option("-o,--output", out_file, "File to write")->required();

    // sweep
    std::string sweep_dir, sweep_npshi = "6", sweep_steps;
    synth::SweepSpec sweep_spec;
    auto* sweep = app.add_subcommand(
        "sweep",
        "Write an acoustic NPSH test of one pump for 'cavitas inception': recordings at falling NPSHa (16-bit PCM, "
        "full scale 50 g) and SWEEP.csv, a route manifest of them with each row's suction gauge reading (solved "
        "for the step's NPSHa in water at --temperature, at the station's 62 m), temperature, elevation and the "
        "pump's head. Below --npshi the pump cavitates: the HF band rises --rise dB for each metre under it "
        "(sparse collapses, dense ones from 10 dB on); above it every recording is healthy. With --speed-drop the "
        "speed falls step by step and the truth holds at nominal speed (NPSHa x (n_nominal / n)^2, levels scaling "
        "with n^2). The head falls 3 % at --npsh3. Same seed, same files.\n\n"
        "  cavitas-synth sweep demo-sweep --npshi 6\n"
        "  cavitas-synth sweep quiet-sweep --npshi none");
    sweep->add_option("OUTDIR", sweep_dir, "Folder to write into (created if missing)")->required();
    sweep->add_option("--machine", sweep_spec.tag, "Machine tag")->capture_default_str();
    sweep->add_option("--npshi", sweep_npshi, "NPSHa at nominal speed where cavitation begins, m, or none")
        ->capture_default_str();
    sweep->add_option("--steps", sweep_steps, "The steps' NPSHa, m, falling, comma separated (default 12,11,...,3)");
    sweep->add_option("--rise", sweep_spec.rise_db_per_m, "HF rise below NPSHi, dB per metre")->capture_default_str();
    sweep->add_option("--recordings", sweep_spec.recordings_per_step, "Recordings a step")->capture_default_str();
    sweep->add_option("--seconds", sweep_spec.duration_s, "Length of each recording, s")->capture_default_str();
    sweep->add_option("--speed-drop", sweep_spec.speed_drop,
                      "Share the speed falls by from the first step to the last (0.15: to 85 %)")->capture_default_str();
    sweep->add_option("--npsh3", sweep_spec.npsh3_m, "NPSHa at nominal speed where the head has fallen 3 %, m")
        ->capture_default_str();
    sweep->add_option("--temperature", sweep_spec.temperature_c, "Water temperature, C")->capture_default_str();
    sweep->add_option("--seed", sweep_spec.seed, "Seed of the sweep")->capture_default_str();

    CLI11_PARSE(app, argc, argv);

    try {
        if (*demo) {
            const auto plan = synth::demo_plan(demo_seed);
            const auto summary = synth::write_set(demo_dir, plan, nullptr, std::cerr, synth::demo_files(),
                                                     synth::SetColumns::demo, synth::demo_events());
            print_summary("demo", demo_dir, summary);
        } else if (*eval) {
            const auto plan = synth::eval_plan(per_kind, eval_seed);
            const bool tty = isatty(STDERR_FILENO) != 0;
            const auto summary = synth::write_set(
                eval_dir, plan,
                [tty](std::size_t done, std::size_t total) {
                    std::cerr << "eval: " << done << '/' << total << " recordings" << (tty && done < total ? "\r" : "\n")
                              << std::flush;
                },
                std::cerr);
            print_summary("eval", eval_dir, summary);
        } else if (*field) {
            const auto plan = synth::field_plan(field_seed);
            const bool tty = isatty(STDERR_FILENO) != 0;
            const auto summary = synth::write_set(
                field_dir, plan,
                [tty](std::size_t done, std::size_t total) {
                    std::cerr << "field: " << done << '/' << total << " recordings"
                              << (tty && done < total ? "\r" : "\n") << std::flush;
                },
                std::cerr, {}, synth::SetColumns::field);
            print_summary("field", field_dir, summary);
        } else if (*sweep) {
            if (sweep_npshi == "none") sweep_spec.npshi_m.reset();
            else sweep_spec.npshi_m = std::stod(sweep_npshi);
            if (!sweep_steps.empty()) {
                sweep_spec.npsha_m.clear();
                std::size_t at = 0;
                while (at <= sweep_steps.size()) {
                    const std::size_t comma = std::min(sweep_steps.find(',', at), sweep_steps.size());
                    sweep_spec.npsha_m.push_back(std::stod(sweep_steps.substr(at, comma - at)));
                    at = comma + 1;
                }
            }
            const auto w = synth::write_sweep(sweep_dir, sweep_spec);
            std::cerr << "sweep: wrote " << w.recordings << " recordings and " << w.manifest.string() << " ("
                      << sweep_spec.tag << ", NPSHi " << (sweep_spec.npshi_m ? std::to_string(*sweep_spec.npshi_m) + " m"
                                                                              : std::string("none"))
                      << ")\n";
        } else if (*one) {
            synth::CaseSpec spec;
            spec.machine = synth::machine_by_tag(tag);
            if (fs_hz > 0) spec.machine.fs_hz = fs_hz;
            spec.kind = synth::kind_from_name(kind_name);
            spec.duration_s = seconds;
            spec.seed = seed;
            spec.severity = severity;
            spec.rpm_override = rpm;
            const bool flac = std::filesystem::path(out_file).extension() == ".flac";
            const synth::Encoding enc = encoding_name.empty()
                                            ? (flac ? synth::Encoding::flac16 : synth::Encoding::pcm16)
                                            : synth::encoding_from_name(encoding_name);
            const auto rec = synth::synthesize_recording(spec);
            const auto clipped =
                synth::write_wav(out_file, rec.g, rec.fs_hz, synth::kFullScaleG, synth::sf_format_of(enc));
            if (clipped > 0)
                std::cerr << "warning: " << out_file << ": " << clipped << " samples exceeded the +-"
                          << synth::kFullScaleG << " g full scale and were clipped\n";
            std::cerr << "one: wrote " << out_file << " (" << spec.machine.tag << ", " << kind_name << ", label "
                      << synth::label_of(spec.kind) << ", " << seconds << " s at " << rec.fs_hz << " Hz, "
                      << rec.rpm << " rpm, " << synth::name_of(enc) << ")\n";
        }
    } catch (const std::exception& e) {
        std::cerr << "cavitas-synth: error: " << e.what() << '\n';
        return 1;
    }
    return 0;
}
