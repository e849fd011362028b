// FFTW plans kept between runs: FFTW's "wisdom" for the transforms cavitas
// made, in the user's cache folder, so that the next run rebuilds its plans
// from it instead of planning again (about 10 ms of a one-minute analyze; the
// plans are the same ones, so results are unchanged). A cache only: missing,
// unreadable or refused files are ignored and written anew.
//
// Folder: $CAVITAS_CACHE_DIR if set (empty: no cache at all), else
// $XDG_CACHE_HOME/cavitas, else $HOME/.cache/cavitas. One pair of files per
// processor (its model and instruction-set flags), fftw-KEY.single and
// fftw-KEY.double, since plans are chosen for the processor they run on.
#pragma once

#include <optional>
#include <string>

namespace cavitas::app {

/// The cache folder by the rules above; empty when there is none.
std::string plan_cache_folder();

/// Loads the saved plans once per process (later calls do nothing).
void load_saved_fft_plans() noexcept;

/// Saves this process's plans when they differ from what was loaded; does
/// nothing when load_saved_fft_plans was never called or there is no folder.
void save_fft_plans() noexcept;

}  // namespace cavitas::app
