// Synthetic, labelled accelerometer recordings of centrifugal pumps, for the
// demo set in samples/, the labelled evaluation set and the benchmarks.
//
// The scenario is invented: utility "Lowmere Water Trust", site "Orrin Weir
// pumping station", three pumps OW-P101..OW-P103, and for the field set
// OW-P104 on a variable-speed drive. A recording is a sum of
//   * shaft tones 1x, 2x, 3x and blade-pass tones BPF, 2xBPF (random phases,
//     +-10 % amplitude per recording),
//   * a coloured broadband background: a pink-ish (-10 dB/decade) part below
//     about 1 kHz and a flat floor that also drives the machine's three lightly
//     damped structural resonances,
//   * the fault of the recording's Kind (cavitation, or a look-alike that is
//     labelled normal),
//   * and, only where a CaseSpec asks for them, field conditions: levels scaled
//     with speed, a re-mounted sensor's gain and tilt, a level step.
// Every amplitude is in g. A fault's strength is set by the band-power rise it
// causes over the same recording without the fault (computed exactly from the
// filter responses, so "incipient raises the HF band by 5 dB" holds in
// expectation for any machine and sample rate).
//
// Same CaseSpec -> bit-identical samples on a given build: all randomness comes
// from std::mt19937_64 through our own 53-bit uniform and Box-Muller, never the
// standard distributions (their output differs between standard libraries).
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <functional>
#include <iosfwd>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace cavitas::synth {

inline constexpr std::string_view kUtility = "Lowmere Water Trust";
inline constexpr std::string_view kSite = "Orrin Weir pumping station";
/// Full scale of the written files: sample value 1.0 == 50 g.
inline constexpr double kFullScaleG = 50.0;

enum class Kind { healthy, incipient, developed, bearing, turbulence, mains, speed, inner_race };
/// The kinds of the evaluation set (eval_plan); unchanged since that set was
/// fixed, so the set stays the same.
inline constexpr std::array<Kind, 7> kAllKinds{Kind::healthy,    Kind::incipient, Kind::developed,
                                               Kind::bearing,    Kind::turbulence, Kind::mains,
                                               Kind::speed};
/// Every kind the generator makes: kAllKinds and the inner-race look-alike
/// (used by the field set and `cavitas-synth one`).
inline constexpr std::array<Kind, 8> kEveryKind{Kind::healthy,    Kind::incipient, Kind::developed,
                                                Kind::bearing,    Kind::turbulence, Kind::mains,
                                                Kind::speed,      Kind::inner_race};

/// "normal", "incipient" or "developed": the truth a detector must report.
std::string label_of(Kind kind);
/// "healthy", "incipient", ... : which signal was generated.
std::string name_of(Kind kind);
/// Inverse of name_of; throws std::invalid_argument naming the valid kinds.
Kind kind_from_name(std::string_view name);

/// One structural resonance of the casing/bearing housing as seen by the sensor.
/// Its frequency is a fraction of the sample rate, so a recording made at another
/// rate (cavitas-synth one --fs) keeps the same band statistics; every tone and
/// the < 1 kHz bands stay at their true Hz.
struct Mode {
    double fraction_of_fs = 0.2;  ///< centre frequency / fs, below 0.4
    double damping_ratio = 0.03;  ///< zeta, 0.02..0.05 (Q = 1 / (2 zeta))
    double gain = 5.0;            ///< peak amplification over the direct path
};

struct Machine {
    std::string tag;   ///< e.g. "OW-P101"
    double rpm = 0;    ///< nominal shaft speed
    int vanes = 0;     ///< impeller vanes; BPF = vanes * rpm / 60
    double fs_hz = 0;  ///< sample rate of its recorder
    std::string duty{};
    std::array<Mode, 3> modes{{{0.11, 0.03, 5.0}, {0.22, 0.03, 6.0}, {0.36, 0.04, 5.0}}};
};

/// The three Orrin Weir pumps (P101 raw-water lift, P102 treated-water booster,
/// P103 backwash): the machines of the demo and evaluation sets.
const std::vector<Machine>& scenario_machines();
/// OW-P104, the clear-well transfer pump on a variable-speed drive (1780 rpm
/// at full speed, 5 vanes, recorded at 25 600 Hz): the field set's fourth
/// machine, kept out of scenario_machines() so that the evaluation set stays
/// as it was.
const Machine& drive_machine();
/// scenario_machines() and drive_machine(), in that order.
const std::vector<Machine>& every_machine();
/// Any of every_machine(); throws std::invalid_argument naming the known tags.
const Machine& machine_by_tag(std::string_view tag);

/// A frequency band in Hz.
struct Band {
    double low_hz = 0;
    double high_hz = 0;
};
/// The band in which cavitation is judged here: 0.2..0.45 fs.
Band hf_band(double fs_hz);
/// Flow-noise band: 0..1000 Hz (tones included).
Band lf_band();

/// Collapse process of incipient/developed cavitation.
struct CavitationParams {
    double collapse_rate_per_s = 0;   ///< lambda0, mean collapses per second
    double bpf_depth = 0.6;           ///< m: rate(t) = lambda0 (1 + m cos(2 pi BPF t + phi)) ...
    double shaft_depth = 0.2;         ///< ... (1 + m1 cos(2 pi f1 t + phi1)): one vane differs
    double amplitude_sigma_ln = 0.5;  ///< collapse amplitudes are log-normal with this sigma
    double hf_rise_db = 0;            ///< rise of the HF band power over the fault-free signal
    double lf_rise_db = 0;            ///< rise of the 0..1 kHz band from flow unsteadiness (developed)
};

/// Outer-race defect impacts (a look-alike: impulsive but at a non-integer order).
struct BearingParams {
    double order = 4.4;          ///< impacts per shaft revolution, >= 0.15 from any integer
    double slip_frac = 0.015;    ///< standard deviation of each interval / mean interval
    int mode_index = 1;          ///< which structural resonance the impacts ring
    double hf_rise_db = 10;      ///< rise of the HF band power
    double amplitude_spread = 0.15;  ///< relative standard deviation of impact amplitude
};

/// Inner-race defect impacts (a look-alike, label normal). The defect turns with
/// the shaft and passes through the load zone once a revolution, so the
/// impacts are amplitude-modulated at the shaft rate f_r:
///   a(t) = max(0, 1 + q cos(2 pi f_r t + phi) + q2 cos(4 pi f_r t + phi2)),
/// and the squared envelope shows lines at f_r, 2 f_r, BPFI and BPFI +- f_r
/// (Randall & Antoni, "Rolling element bearing diagnostics - a tutorial",
/// MSSP 25 (2011) 485-520, section 2).
struct InnerRaceParams {
    double order = 5.4;             ///< BPFI / f_r, 4.6..6.4, >= 0.15 from any integer
    double slip_frac = 0.015;       ///< standard deviation of each interval / mean interval
    double load_depth = 0.7;        ///< q, 0.5..0.9
    double load_depth_2x = 0.2;     ///< q2, 0.2..0.4 of q
    int mode_index = 2;             ///< which structural resonance the impacts ring
    double hf_rise_db = 10;         ///< rise of the HF band power
    double amplitude_spread = 0.15; ///< relative standard deviation of impact amplitude (besides a(t))
};

/// Hydraulic turbulence/recirculation noise in 20..800 Hz (a look-alike).
struct TurbulenceParams {
    double lf_rise_db = 9;  ///< rise of the 0..1 kHz band power
    double low_hz = 20;
    double high_hz = 800;
};

/// Electrical pickup at mains frequency and harmonics up to 1 kHz (a look-alike).
struct MainsParams {
    double mains_hz = 50;
    double amplitude_g = 0.2;  ///< of the fundamental; harmonics fall off as 1/h
};

/// Shaft speed away from nominal (a look-alike: every tone moves).
struct SpeedParams {
    double offset_frac = 0.03;  ///< true rpm = nominal * (1 + offset_frac); |offset| 2..4 %
};

/// The parameters of every kind; only the one matching CaseSpec::kind is used.
struct FaultParams {
    CavitationParams cavitation;
    BearingParams bearing;
    TurbulenceParams turbulence;
    MainsParams mains;
    SpeedParams speed;
    InnerRaceParams inner_race;
};

/// Parameters of `kind` at `severity` (0..1 across the kind's documented range):
///   incipient  lambda0 = 20 * 7.5^s /s (20..150), HF rise 3.5 + 4 s dB
///   developed  lambda0 = 2000 * 10^s /s (2 000..20 000), HF rise 11 + 13 s dB,
///              0..1 kHz rise 2 + 2 s dB
///   bearing    HF rise 6 + 9 s dB (order, slip and ringing mode from the seed)
///   turbulence 0..1 kHz rise 6 + 6 s dB
///   mains      0.1 + 0.3 s g at 50 Hz (+-0.05 Hz)
///   speed      |offset| 2 + 2 s %, sign from the seed
///   inner_race HF rise 6 + 9 s dB (order, slip, load zone and ringing mode from the seed)
/// Drawn from the seed: blade-pass depth m in [0.4, 0.9] (developed: [0.4, 0.7],
/// as attached cavities persist through the passage), 1x depth m1 in [0.1, 0.3],
/// bearing order, slip 1..2 % and ringing mode, mains 50 +- 0.05 Hz, speed sign,
/// then (after all of those, so that they are as before the kind was added)
/// the inner-race order 4.6..6.4 (>= 0.15 from an integer), slip 1..2 %,
/// load-zone depth q 0.5..0.9 and q2 0.2..0.4 q, ringing mode.
FaultParams draw_params(Kind kind, double severity, std::uint64_t seed);

struct CaseSpec {
    Machine machine;
    Kind kind = Kind::healthy;
    double duration_s = 10;
    std::uint64_t seed = 1;
    double severity = 0.5;    ///< 0..1 across the kind's range (see draw_params)
    double rpm_override = 0;  ///< > 0: the true shaft speed (else nominal, or nominal +- offset for speed)
    std::optional<FaultParams> params{};  ///< set: used as given instead of draw_params

    // Field conditions. Each defaults to "no effect": at 0 the samples are
    // bit-identical to a spec without these fields (the demo and evaluation sets
    // never set them).

    /// Speed scaling of levels for a pump whose speed varies (a drive): the
    /// background and the machine tones scale in amplitude as
    /// (true rpm / machine.rpm)^exponent. The HF exponent acts on the flat floor
    /// and its resonances (nearly all of the HF band), the LF one on the pink
    /// part below 1 kHz and the shaft/blade-pass tones; mains pickup does not
    /// scale. Faults keep their rise over the scaled background. Within 0..4.
    /// The field set uses 2.5 (HF) and 2 (LF), our choice from the affinity
    /// laws: hydraulic forces go as n^2, flow-noise power as U^4..U^6, so
    /// amplitude exponents 2..3 - a lead, not a value measured on a pump.
    double level_speed_exponent_hf = 0;
    double level_speed_exponent_lf = 0;
    /// A re-mounted magnet: the whole recording (faults, tones, pickup) scaled
    /// by gain_db, and tilted by tilt_db_per_decade about 1 kHz (gain
    /// tilt * log10(f / 1 kHz) dB from 10 Hz to 0.45 fs, flat outside; a mount
    /// resonance that moved). Within -40..40 dB and -6..6 dB/decade.
    double gain_db = 0;
    double tilt_db_per_decade = 0;
    /// A level step inside the record (a baseline hazard): from step_at_s on,
    /// the broadband background at and above 1 kHz rises by step_db (its power
    /// in hf_band() by exactly that in expectation); the signal is stationary
    /// on either side. step_db within 0..40, step_at_s within 0..duration_s.
    double step_at_s = 0;
    double step_db = 0;
    /// The band in which the faults' HF rises (and a level step) are set, when
    /// not hf_band() (high_hz 0: hf_band()). The sweep sets it to the band
    /// cavitas analyses, so that a stated rise is the rise cavitas measures.
    Band rise_band{};
};

struct Recording {
    std::vector<float> g;  ///< acceleration in g, duration_s * fs_hz samples
    double fs_hz = 0;
    double rpm = 0;  ///< true shaft speed of this recording
    FaultParams params;
    /// Median collapse amplitude (cavitation) or mean impact amplitude (bearing),
    /// in g summed over the few samples of one pulse; 0 for other kinds.
    double pulse_amplitude_g = 0;
    /// Expected rms of the fault-free signal in hf_band() and lf_band() (after
    /// speed scaling; before a level step and a re-mount).
    double healthy_hf_rms_g = 0;
    double healthy_lf_rms_g = 0;
};

Recording synthesize_recording(const CaseSpec& spec);
/// The samples of synthesize_recording(spec), in g.
std::vector<float> synthesize(const CaseSpec& spec);

/// A seed for item `index` of a set made from `master` (splitmix64 mixing).
std::uint64_t derive_seed(std::uint64_t master, std::uint64_t index);

/// File encodings the sets use.
enum class Encoding { pcm16, pcm24, float32, flac16 };
std::string name_of(Encoding encoding);                  ///< "pcm16", "pcm24", "float", "flac16"
Encoding encoding_from_name(std::string_view name);      ///< throws std::invalid_argument
int sf_format_of(Encoding encoding);                     ///< libsndfile SF_FORMAT_* value
std::string extension_of(Encoding encoding);             ///< ".wav" or ".flac"

/// Writes g / full_scale_g as one channel with libsndfile (`sf_format` decides
/// WAV or FLAC and the sample type) to path + ".tmp", then renames it to path.
/// Samples beyond +-full scale are clipped; returns how many were. Throws
/// std::runtime_error naming the file if it cannot be written.
std::size_t write_wav(const std::string& path, std::span<const float> g, double fs_hz,
                      double full_scale_g, int sf_format);

/// Writes channels of values (each the same length, in `unit`) as a UFF file
/// of one dataset 58b per channel (binary, little-endian IEEE single), in the
/// layout of the SDRL description that src/io/uff58 reads: the "-1" line, the
/// 58b id line (58, b, 1, 2, 11 ASCII lines, byte count, 0, 0, 0, 0), ID lines
/// 1..5, record 6 (time response, response entity `entity`, node 1, direction
/// +1 X, +2 Y, +3 Z by channel, up to three channels), record 7 (real single, N,
/// even spacing, 0, 1/fs, 0), records 8..11 (Time in s; Acceleration in `unit`,
/// e.g. "V" or "m/s^2"), the N values, then "\n    -1\n". `id_line` is ID line 1,
/// `date` ID line 3 (DD-MMM-YY HH:MM:SS). Written to path + ".tmp", then renamed.
void write_uff58b(const std::string& path, const std::vector<std::vector<float>>& channels, double fs_hz,
                  std::string_view unit, std::string_view entity, std::string_view id_line, std::string_view date);
/// Writes channels as a CSV time waveform: a rate line "# sample_rate_hz = FS",
/// a header of "NAME [unit]" cells (names[c]), then one row a sample, each value
/// with 5 significant digits.
void write_csv_waveform(const std::string& path, const std::vector<std::vector<float>>& channels,
                        const std::vector<std::string>& names, double fs_hz, std::string_view unit);
/// Writes a MATLAB v5 MAT-file (libmatio, uncompressed, a fixed header text so
/// that the file is the same on every run) holding `variable`, an N x C single
/// matrix (channel c in column c), and the scalar double `fs`.
void write_mat(const std::string& path, const std::vector<std::vector<float>>& channels, double fs_hz,
               const std::string& variable);

/// How a planned recording is written.
enum class FileFormat {
    sound,   ///< WAV or FLAC (Encoding), one channel in g / kFullScaleG
    uff58b,  ///< write_uff58b, one dataset per channel
    csv,     ///< write_csv_waveform
    mat,     ///< write_mat, variable PlannedRecording::variable
};

/// One file of a set.
struct PlannedRecording {
    std::string file;  ///< relative to the set's folder
    std::string role;  ///< "baseline" or "test"
    std::string point = "DE-H";                       ///< measurement point
    std::string datetime = "2026-01-01T00:00:00";     ///< when it was recorded (ISO 8601)
    CaseSpec spec;
    Encoding encoding = Encoding::pcm16;
    /// The operating point at the recording, as a sidecar file (TOML, the keys of
    /// `cavitas analyze`'s operating-point flags); written beside the recording
    /// as NAME.op.toml when not empty.
    std::string sidecar_toml;

    // The field set's columns (empty or default elsewhere; see field_plan).
    std::string group;      ///< the baseline this recording belongs to or is judged against
    bool rpm_given = true;  ///< the evaluator passes the true rpm to the analysis
    std::string expect;     ///< normal / incipient / developed / indeterminate (baselines: their label)
    std::string hazard;     ///< baseline rows: none / step / cavitating / low_npsh / short
    /// NPSHa the sidecar states (computed by models/ from its own text); 0 = no sidecar.
    double sidecar_npsha_m = 0;

    // Files other than a sound file (the demo's; default: a sound file of `spec`).
    FileFormat format = FileFormat::sound;
    /// Channels 1, 2, ... of a multi-axis point (channel 0 is `spec`); not for sound files.
    std::vector<CaseSpec> more_axes{};
    /// Unit the values are written in: "g", "m/s^2", or "V" with sensitivity_v_per_g.
    std::string unit = "g";
    double sensitivity_v_per_g = 0;  ///< > 0: values are volts, g * this
    std::string variable = "acc";    ///< the MAT-file's matrix
};

/// Further text files of a set (NPSH3 curves): name and contents.
struct SetFile {
    std::string name;
    std::string text;
};

/// The demo set: a small route of the invented Orrin Weir station, 8 s each,
/// 16-bit PCM: OW-P101 (2 baselines, then visits on 2026-09-07 healthy,
/// 10-05 incipient, 11-02 developed, a repair, 11-09 healthy), OW-P102
/// (2 baselines, turbulence, developed at part load), OW-P103 (2 baselines,
/// a bearing look-alike); all at point DE-H. Then OW-P101's triaxial point
/// NDE-T (a portable three-axis logger at 12 800 Hz, 4 s a recording; X radial
/// horizontal, Y radial vertical, Z axial): 2 baselines (healthy, each axis
/// its own seed, axis gains X 0, Y -3, Z -6 dB) as UFF 58b in volts (100 mV/g),
/// the visit of 2026-11-02 as a MAT-file (N x 3 volts, variable acc, fs) and
/// that of 2026-11-09 as CSV in m/s^2. On 11-02 the cavitation is developed at
/// full severity (HF +24 dB on X); the casing carries the collapses to the Y
/// and Z axes 12 and 15 dB weaker, relative to those axes' own backgrounds,
/// than to X (the same collapse process - rate and modulation - each axis its
/// own realisation), which leaves HF rises of about 12.3 dB on Y and 9.5 dB on Z.
/// Each recording has its operating point in a sidecar (the invented duty of
/// the Orrin Weir station, elevation 62 m: OW-P101 lifts 14 C raw water from
/// the weir sump, the sump drawn down on the incipient and developed days;
/// OW-P102 boosts 12 C treated water from a flooded tank, throttled to part
/// load on its developed day), and demo_files() adds each pump's NPSH3 curve.
std::vector<PlannedRecording> demo_plan(std::uint64_t seed = 20240611);
std::vector<SetFile> demo_files();

/// A maintenance event of a set's route: an event row of route.csv (an empty
/// file cell, the demo columns' `event` cell; an empty point is every point).
struct SetEvent {
    std::string machine, point, datetime, what;
};
/// The demo's: OW-P101's repair of 2026-11-04, between the developed visit of
/// 11-02 and the healthy one of 11-09 (as their sidecar notes tell it).
std::vector<SetEvent> demo_events();
/// The evaluation set: per machine 3 baselines and `per_kind` tests of every kind,
/// 10 s each, severities stratified over 0..1, tests in shuffled order under blind
/// names (OW-P101_test_017.wav), encodings cycling pcm16/pcm24/float/flac16.
std::vector<PlannedRecording> eval_plan(int per_kind, std::uint64_t seed);

/// The field set: what a route meets that the evaluation set does not - a
/// variable-speed pump, baselines gathered over several visits with the sensor
/// re-mounted each time, spoiled baselines, a look-alike at a bearing, speeds
/// the tool must find itself, short captures. Recordings belong to groups (one
/// baseline each, named like P104-vsd or P101-step); every recording is 10 s
/// unless said, tests of a group have blind names in shuffled order
/// (P101-visits_test_07.wav), encodings cycle as in the evaluation set.
///   P104-vsd     OW-P104 (drive_machine()): baselines at 0.70, 0.85, 1.00 x
///                1780 rpm (2 each, healthy); tests at 0.75..0.95 x of every
///                kind (kEveryKind, 2 each; expect = label), and at 0.50 x and
///                1.25 x, healthy and developed, outside the speeds the baseline
///                covers (expect indeterminate). Every OW-P104 recording has
///                the speed exponents 2.5 (HF) and 2 (LF).
///   P101-visits  4 visits of OW-P101 on different dates, 2 recordings each,
///                the magnet re-mounted at each visit (gain within +-2.5 dB,
///                tilt within +-1 dB/decade); tests re-mounted again (gain
///                within +-3 dB): 6 healthy, 3 incipient, 3 developed.
///   P10x-step, -cavitating, -low_npsh, -short (4 groups each over OW-P101..
///                P103; "-2" when a machine has two): spoiled baselines of one
///                or two recordings - a level step of 8..20 dB at 40..70 % of a
///                record; an incipient or developed recording; a sidecar whose
///                suction pressure and temperature give NPSHa 0.1..0.8 m; a
///                single recording of 2 s. P10x-clean (4 groups): two healthy
///                recordings and sound sidecars (hazard none, no warning due).
///                Each has 2..3 tests (healthy, developed; expect = label).
///                Every baseline of these groups has a sidecar NAME.op.toml
///                (the demo's keys without speed; NPSHa 7..26 m unless low).
///   P10x-ref     3 healthy baselines of each of OW-P101..P103, against which:
///                inner-race tests (3 a machine, expect normal); tests whose
///                rpm the tool must find itself (rpm_given 0: healthy,
///                incipient, developed, speed and a bearing, inner-race or
///                mains look-alike a machine; expect = label); captures of
///                1..2 s of every kind (16; expect = label).
///   P104-fixed   OW-P104 held at 0.90 x (2 baselines); rpm_given 0 tests at
///                that speed (healthy, developed; expect = label) and after a
///                drive-speed jump of 15..25 % up or down (healthy, developed
///                twice each; expect indeterminate).
/// 183 recordings, about 113 MB; about 11 s to write on one core.
std::vector<PlannedRecording> field_plan(std::uint64_t seed = 20260301);

struct SetSummary {
    std::size_t files = 0;
    std::uintmax_t bytes = 0;  ///< recordings only
    std::size_t clipped_files = 0;
};

/// Which columns the manifests and truth.csv of a set have.
enum class SetColumns {
    standard,  ///< the demo and evaluation sets'
    demo,      ///< the standard ones, then sensitivity,unit,variable,sample_rate_hz,event (the demo set's)
    field,     ///< and the field set's: manifests + group,rpm_given,expect,hazard;
               ///< truth.csv + the inner-race, speed-scaling, re-mount, step and sidecar NPSHa values
};

/// Synthesizes and writes every planned recording into `folder` (created if
/// missing), then route manifests - manifest.csv (all), baselines.csv (role
/// baseline), route.csv (role test), header file,machine,point,channel,datetime,
/// rpm,vanes,full_scale,role,label,kind,fs_hz,duration_s,seed (with
/// SetColumns::field also group,rpm_given,expect,hazard) - and truth.csv
/// (the fault parameters).
/// `progress(done, total)` is called after each file; clipping warnings go to `warn`.
/// Sidecars of the plan and `files` are written too; `events` become event rows
/// at the end of route.csv (SetColumns::demo only: its columns have `event`).
SetSummary write_set(const std::filesystem::path& folder, const std::vector<PlannedRecording>& plan,
                     const std::function<void(std::size_t, std::size_t)>& progress, std::ostream& warn,
                     const std::vector<SetFile>& files = {}, SetColumns columns = SetColumns::standard,
                     const std::vector<SetEvent>& events = {});

}  // namespace cavitas::synth
