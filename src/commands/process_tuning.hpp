// The process-level speed settings, in one place. Each keeps its reason here;
// the figures that justified it, with their dates, are in tools/bench/README.md
// ("Process memory"). The other two pieces of speed plumbing live where they
// act: the report module loaded with dlopen only by `report`
// (src/report/report_options.hpp), and the stage clock of the analysis
// (models/analyzer.hpp, printed with CAVITAS_STAGE_TIMES=1).
#pragma once

namespace cavitas::app {

/// glibc heap settings for the whole process, called first in main():
/// - freed DSP buffers stay in the heap for the next recording instead of
///   going back to the kernel (M_MMAP_THRESHOLD, M_TRIM_THRESHOLD): a route
///   would otherwise fault them in again for every recording;
/// - one heap for all threads (M_ARENA_MAX 1): route's jobs allocate only when
///   an analyzer is built, never per segment, so they do not contend, and
///   their buffers land in the huge-page heap below instead of per-thread
///   arenas of 4 KiB pages;
/// - the heap grown once by 64 MiB with a transparent-huge-page hint
///   (MADV_HUGEPAGE; ignored where THP is off): an analysis touches some
///   20 MB of fresh buffers, and in 4 KiB pages those faults were a
///   measurable share of its time. Pages never touched are never resident.
void tune_process_memory();

}  // namespace cavitas::app
