// What is wrong with the recordings a baseline is learned from. A baseline is
// the yardstick of every later verdict at its point: one learned from a record
// whose level steps halfway, from visits that disagree, from a pump already
// cavitating or from too little data makes every later finding wrong in a way
// no finding can see. check_baseline says so, naming the file and the time.
#pragma once

#include <optional>
#include <vector>

#include "models/baseline.hpp"
#include "models/operating_point.hpp"

namespace cavitas::models {

/// Limits of the checks, each with its reason.
struct BaselineCheckLimits {
    /// A band level that moves by this much between two parts of one record
    /// (median of each part, at least 2 segments a part) is a step or drift
    /// when it is also kStepSpreads x the spread within the parts: twice the
    /// power, and well beyond the record's own scatter. Our choices.
    double step_db = 3.0;
    double step_spreads = 4.0;
    /// A band level that ranges over more than this between segments of one
    /// record (ignoring the single highest and lowest from 6 segments on) is
    /// not a steady state, step or no step: a steady machine's 1 s band levels
    /// scatter by a fraction of a dB (0.2-0.5 dB in the real healthy records
    /// at 700 and 1000 rpm). 6 dB is our choice: twice the alert level.
    double unsteady_db = 6.0;
    /// Visits whose levels (brought to one speed) differ by more than
    /// 3 sqrt(2) repeatability floors (a 3-sigma difference of two re-mounted
    /// readings), and at least this much, disagree. Our choice.
    double disagree_min_db = 3.0;
    /// Impulsive HF locked to blade passage in a "known-good" record: HF
    /// kurtosis at least 4 (Gaussian 3 plus the classifier's rise of 1) with
    /// the envelope line at BPF 10 dB over its floor. A healthy pump's HF
    /// envelope carries blade-pass lines too: 6-9 dB with kurtosis 4.5-8 in
    /// the real lab records at 700 rpm with the suction at +0.05 bar gauge
    /// (not cavitating), so the line must stand higher than the classifier's
    /// 6 dB before a baseline is suspected on its own. Our choice.
    double cavitating_kurtosis = 4.0;
    double cavitating_bpf_line_db = 10.0;
    /// Or strongly impulsive HF (median segment kurtosis 10 or more: the real
    /// healthy records reach 7.8) whose envelope is modulated at blade passage
    /// by a quarter or more (line / mean squared envelope): sparse collapses
    /// leave a noisy envelope floor that hides the line itself (the
    /// classifier's weak-line rule). Our choices.
    double strongly_impulsive_kurtosis = 10.0;
    double cavitating_bpf_depth = 0.25;
    /// Too little: fewer segments than this in all, or one recording shorter
    /// than short_recording_s. Our choices (5 segments: the quality gate's
    /// warning level for a recording; 3 s: three 1 s segments).
    std::size_t min_segments = 5;
    double short_recording_s = 3.0;
};

/// A recording whose HF level steps (check "level_step") is cut to the part on
/// the lower side of the step, where the machine was quieter: the part that
/// can still be known-good. Returns the time of the cut (s from the start) or
/// a negative number when the recording is steady.
double keep_quieter_part(BaselineSource& source, double segment_s, const BaselineCheckLimits& limits = {});

/// Visits whose HF level (brought to one speed) stands above the others by
/// more than re-mounting explains (the "visits_disagree" limit): louder is the
/// suspect side, as for a step. With two visits, the louder one of a pair
/// that disagrees. Indices into baseline.sources, never all of them.
std::vector<std::size_t> louder_visits(const Baseline& baseline, const BaselineCheckLimits& limits = {});

/// The checks, on a learned baseline (its sources carry the per-segment
/// values) and the operating point stated for each source (same order; empty
/// or nullopt = not stated). Returns the warnings, worst first: cavitation
/// present, steps, disagreement, too little.
std::vector<BaselineWarning> check_baseline(const Baseline& baseline,
                                            const std::vector<std::optional<Hydraulics>>& duties = {},
                                            const BaselineCheckLimits& limits = {});

}  // namespace cavitas::models
