#!/usr/bin/env bash
# How the committed seed corpus of the fuzz targets was made. The seeds are
# committed bytes; rerun this only to change them on purpose.
#
#   tests/fuzz/make_corpus.sh [CAVITAS_BINARY] [--baselines-only]   (default: build/cavitas)
#
# corpus/recording/  tiny valid recordings written by make_corpus.cpp through
#                    libsndfile (WAV 16/24-bit/float/8-bit, WAVE_EXTENSIBLE,
#                    FLAC, AU, AIFF, W64, CAF).
# corpus/baseline/   one real baseline learned by `cavitas baseline` from a
#                    sample recording, and variants of it: truncated, another
#                    schema, no schema, fields of the wrong JSON type, values out
#                    of range, and a compact (one-line) copy.
#
# Needs a C++20 compiler, pkg-config and libsndfile's development files, and a
# built cavitas (cmake -S . -B build && cmake --build build).
set -euo pipefail

root="$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)"
cd "$root"
cavitas="${1:-build/cavitas}"
only_baselines=0
[[ "${2:-}" == "--baselines-only" ]] && only_baselines=1
[[ -x "$cavitas" ]] || { echo "make_corpus.sh: $cavitas is not an executable; build cavitas first" >&2; exit 1; }

rec=tests/fuzz/corpus/recording
base=tests/fuzz/corpus/baseline
mkdir -p "$rec" "$base"
work="$(mktemp -d "${TMPDIR:-/tmp}/cavitas-corpus.XXXXXX")"
trap 'rm -rf "$work"' EXIT

# --- recordings ---------------------------------------------------------------
# shellcheck disable=SC2046  # pkg-config prints several words on purpose
if (( ! only_baselines )); then
    "${CXX:-c++}" -std=c++20 -O1 -o "$work/make_corpus" tests/fuzz/make_corpus.cpp $(pkg-config --cflags --libs sndfile)
    rm -f "$rec"/*
    "$work/make_corpus" "$rec"
fi

# --- baselines ----------------------------------------------------------------
# The crash regressions found by fuzzing stay (regression_*), with the schema they were found under.
find "$base" -type f ! -name 'regression_*' -delete
valid="$base/valid.json"
"$cavitas" baseline --rpm 1485 --vanes 7 --full-scale 50g -o "$valid" samples/OW-P101_baseline_1.wav
schema=$(grep -o '"cavitas.baseline/[0-9]*"' "$valid" | head -n 1 | tr -d '"')
future="cavitas.baseline/$(( ${schema##*/} + 1 ))"
# Compact form: the same document on one line (jq-free: strip the indentation).
sed -e 's/^ *//' "$valid" | tr -d '\n' > "$base/valid_compact.json"
head -c 1200 "$valid" > "$base/truncated.json"
sed -e "s|\"$schema\"|\"$future\"|" "$valid" > "$base/schema_future.json"
sed -e "s|\"$schema\"|\"other.tool/1\"|" "$valid" > "$base/schema_foreign.json"
sed -e '/"schema":/d' "$valid" > "$base/schema_missing.json"
sed -e 's|"sample_rate_hz": \([0-9.e+]*\)|"sample_rate_hz": "\1"|' "$valid" > "$base/type_rate_string.json"
sed -e 's|"channel": 0|"channel": [0]|' "$valid" > "$base/type_channel_array.json"
sed -e 's|"segment_indicators": {|"segment_indicators": [{|' -e 's|"recording_indicators": {|"recording_indicators": [|' \
    "$valid" > "$base/type_indicators_broken.json"
sed -e 's|"count": \([0-9]*\)|"count": -\1|' "$valid" > "$base/range_negative_count.json"
sed -e 's|"hf_high_hz": [0-9.e+]*|"hf_high_hz": 1.0e9|' "$valid" > "$base/range_band_above_nyquist.json"
sed -e 's|"sources": \[|"sources": [7, null, {"file": 3}, |' "$valid" > "$base/sources_odd_entries.json"
printf '[]' > "$base/array.json"
printf '{"schema": "%s"}' "$schema" > "$base/schema_only.json"
cp "$valid" "$base/with_operating_point.json"
"$cavitas" baseline --rpm 1485 --vanes 7 --full-scale 50g -o "$base/with_operating_point.json" \
    samples/OW-P101_baseline_1.wav samples/OW-P101_baseline_2.wav > /dev/null  # the sidecars give the duty
chmod 644 "$base"/*

ls -l "$rec" "$base"
du -sh tests/fuzz/corpus
