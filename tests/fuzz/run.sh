#!/usr/bin/env bash
# Build the libFuzzer targets (clang, ASan + UBSan) and run each one for a
# while on a scratch copy of the committed seed corpus.
#
#   tests/fuzz/run.sh [SECONDS_PER_TARGET]      (default 32)
#
# Nine targets: 32 s each keeps the whole stage (build from ccache included)
# within about six minutes of CI; .ci/run calls it with no argument.
#
# Environment: FUZZ_CXX (default clang++), FUZZ_JOBS (build jobs, default
# nproc), FUZZ_ARGS (extra libFuzzer flags, e.g. "-max_len=20000").
# Exit status 0 when no target found anything; 1 when a target reported a
# crash, sanitizer error, timeout, out-of-memory or leak (the reproducer is
# kept in build-fuzz/fuzz-artifacts/TARGET/, the log in build-fuzz/fuzz-logs/);
# 2 on a usage error. Needs no network.
set -euo pipefail

seconds="${1:-32}"
if ! [[ "$seconds" =~ ^[0-9]+$ ]] || (( seconds < 1 )); then
    echo "usage: tests/fuzz/run.sh [SECONDS_PER_TARGET]   (a whole number of seconds, default 32)" >&2
    exit 2
fi

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)"
cd "$root"
build="build-fuzz"
jobs="${FUZZ_JOBS:-$(nproc 2>/dev/null || echo 2)}"
read -r -a extra_args <<< "${FUZZ_ARGS:-}"

mkdir -p "$build"
CC="${FUZZ_CC:-clang}" CXX="${FUZZ_CXX:-clang++}" cmake -S . -B "$build" \
    -DCAVITAS_FUZZ=ON -DCAVITAS_SANITIZE=ON -DCMAKE_BUILD_TYPE=RelWithDebInfo \
    -DCAVITAS_BUILD_TESTS=OFF -DCAVITAS_BUILD_TOOLS=OFF > "$build/configure.log" 2>&1 ||
    { cat "$build/configure.log" >&2; exit 1; }
kinds=(recording baseline operating_point manifest report curve merge csv uff)
cmake --build "$build" --target "${kinds[@]/#/fuzz_}" -j "$jobs"

scratch="$(mktemp -d "${TMPDIR:-/tmp}/cavitas-fuzz.XXXXXX")"
trap 'rm -rf "$scratch"' EXIT
export UBSAN_OPTIONS="${UBSAN_OPTIONS:-print_stacktrace=1:halt_on_error=1}"
# fuzz_report renders with pango and cairo: their font caches live until exit by
# design (tests/lsan.supp names those libraries, and only them).
export LSAN_OPTIONS="${LSAN_OPTIONS:-suppressions=$root/tests/lsan.supp:print_suppressions=0}"
# fuzz_baseline refuses to start when the committed valid seed no longer reads.
export FUZZ_BASELINE_MUST_ACCEPT="tests/fuzz/corpus/baseline/valid.json"

failed=0
summaries=()
# The longest input each target is given: at least its largest seed (a finding is
# 50-85 kB; the long sidecars are 60 kB); libFuzzer's own default elsewhere.
declare -A max_len=([operating_point]=65536 [report]=131072 [merge]=16384 [curve]=16384 [uff]=16384)
for kind in "${kinds[@]}"; do
    target="fuzz_$kind"
    corpus="$scratch/$kind"
    artifacts="$build/fuzz-artifacts/$target"
    log="$build/fuzz-logs/$target.log"
    mkdir -p "$corpus" "$artifacts" "$(dirname "$log")"
    cp tests/fuzz/corpus/"$kind"/* "$corpus"/
    seeds=$(find "$corpus" -type f | wc -l)
    rm -f "$artifacts"/*

    echo "== $target: ${seconds} s on $seeds seeds (log: $log)"
    target_args=()
    [[ -f "tests/fuzz/$kind.dict" ]] && target_args=(-dict="tests/fuzz/$kind.dict")
    [[ -n "${max_len[$kind]:-}" ]] && target_args+=(-max_len="${max_len[$kind]}")
    status=0
    "$build/tests/fuzz/$target" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 \
        -print_final_stats=1 -artifact_prefix="$artifacts/" "${target_args[@]}" "${extra_args[@]}" "$corpus" \
        > "$log" 2>&1 || status=$?

    execs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -n 1)
    rate=$(sed -n 's/^stat::average_exec_per_sec: *//p' "$log" | tail -n 1)
    if [[ -z "$execs" ]]; then  # no final stats (killed by a crash): the last status line
        execs=$(sed -n 's/^#\([0-9][0-9]*\).*/\1/p' "$log" | tail -n 1)
    fi
    units=$(find "$corpus" -type f | wc -l)
    cov=$(grep -o 'cov: [0-9]*' "$log" | tail -n 1 || true)
    if (( status == 0 )); then
        result=ok
    else
        failed=1
        found=$(find "$artifacts" -type f | head -n 1)
        case "$(basename "${found:-none}")" in
            crash-*) result="CRASH" ;;
            leak-*) result="LEAK" ;;
            timeout-*) result="TIMEOUT" ;;
            oom-*) result="OUT OF MEMORY" ;;
            *) result="FAILED (exit $status)" ;;
        esac
        [[ -n "$found" ]] && result="$result, reproducer $found"
        echo "---- last lines of $log" >&2
        tail -n 60 "$log" >&2
        echo "----" >&2
    fi
    summaries+=("$target: ${execs:-?} execs (${rate:-?}/s), corpus $seeds -> $units inputs${cov:+, $cov}, result: $result")
done

echo
printf '%s\n' "${summaries[@]}"
exit "$failed"
