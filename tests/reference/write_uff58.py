#!/usr/bin/env python3
"""Writes UFF dataset 58/58b files of known samples for cavitas_uff58_check.

    write_uff58.py OUT_DIR

The record layout is the SDRL description as transcribed in the project's
methods notes (A8): records 1-11 as text, record 12 as 6E13.5 (real single),
4E20.12 (real double), 2(E13.5,E20.12) (real double, uneven abscissa) or as
the 58b binary block after the id line (I6,A1,I6,I6,I12,I12,I6,I6,I12,I12).

Two channels of 2 s at 12 800 Hz (a seeded random signal plus a sine) are
written as: ASCII single, ASCII double, binary little-endian single, binary
big-endian double, ASCII single after a dataset 151 with CRLF line ends, and
an ASCII double file with an uneven abscissa; the same samples as a float32
WAV (scipy.io.wavfile). Beside each, the samples cavitas must read, as
little-endian float32 (NAME.chC.f32): text values parsed back here as float64
and rounded to float32, binary values as written. manifest.txt lists
FILE CHANNELS FS_HZ FRAMES EXPECTED (EXPECTED: the prefix of the .f32 files,
or "wav" for the WAV).

Exit 77 (skipped) when numpy or scipy cannot be imported.
"""
import os
import sys

try:
    import numpy as np
    from scipy.io import wavfile
except ImportError as e:  # pragma: no cover
    print(f"SKIPPED: {e}")
    sys.exit(77)

FS_HZ = 12800
FRAMES = 2 * FS_HZ


def samples():
    rng = np.random.default_rng(58)
    t = np.arange(FRAMES) / FS_HZ
    a = 0.5 * np.sin(2 * np.pi * 173.25 * t) + 0.1 * rng.standard_normal(FRAMES)
    b = 2.0 * np.sin(2 * np.pi * 24.75 * t) + 0.3 * rng.standard_normal(FRAMES) - 0.25
    return [a, b]


def header(channel, ordinate_type, n, spacing, dx_s):
    """Records 1..11 of one dataset (text lines without line ends)."""
    return [
        f"OW-P101 DE-H accel {channel}",
        "NONE",
        "01-Nov-26 08:00:00",
        "NONE",
        "NONE",
        "%5i%10i%5i%10i %-10s%10i%4i %-10s%10i%4i" % (1, 0, 0, 0, "P101-DEH", channel + 1, 1, "NONE", 0, 0),
        "%10i%10i%10i%13.5E%13.5E%13.5E" % (ordinate_type, n, spacing, 0.0, dx_s, 0.0),
        "%10i%5i%5i%5i %-20s %-20s" % (17, 0, 0, 0, "Time", "s"),
        "%10i%5i%5i%5i %-20s %-20s" % (12, 0, 0, 0, "Acceleration", "m/s^2"),
        "%10i%5i%5i%5i %-20s %-20s" % (0, 0, 0, 0, "NONE", "NONE"),
        "%10i%5i%5i%5i %-20s %-20s" % (0, 0, 0, 0, "NONE", "NONE"),
    ]


def text_rows(fields, per_line):
    """Fortran-style lines of `per_line` formatted fields (trailing blanks trimmed)."""
    return ["".join(fields[i:i + per_line]).rstrip() for i in range(0, len(fields), per_line)]


def ascii_dataset(channel, values, double):
    fmt, per_line = ("%20.12E", 4) if double else ("%13.5E", 6)
    fields = [fmt % v for v in values]
    lines = ["    -1", "    58"] + header(channel, 4 if double else 2, len(values), 1, 1.0 / FS_HZ)
    lines += text_rows(fields, per_line) + ["    -1"]
    parsed = np.array([float(f) for f in fields], dtype=np.float64).astype(np.float32)
    return "\n".join(lines) + "\n", parsed


def uneven_dataset(channel, values):
    x = np.arange(len(values)) / FS_HZ
    fields = []
    for xi, yi in zip(x, values):
        fields += ["%13.5E" % xi, "%20.12E" % yi]
    lines = ["    -1", "    58"] + header(channel, 4, len(values), 0, 0.0)
    lines += text_rows(fields, 4) + ["    -1"]
    parsed = np.array([float(f) for f in fields[1::2]], dtype=np.float64).astype(np.float32)
    return "\n".join(lines) + "\n", parsed


def binary_dataset(channel, values, double, big_endian):
    dtype = (">" if big_endian else "<") + ("f8" if double else "f4")
    block = np.asarray(values, dtype=np.float64).astype(dtype).tobytes()
    id_line = "%6i%c%6i%6i%12i%12i%6i%6i%12i%12i" % (58, "b", 2 if big_endian else 1, 2, 11, len(block), 0, 0, 0, 0)
    text = "\n".join(["    -1", id_line] + header(channel, 4 if double else 2, len(values), 1, 1.0 / FS_HZ)) + "\n"
    as_read = np.frombuffer(block, dtype=dtype).astype(np.float32)
    return text.encode("ascii") + block + b"\n    -1\n", as_read


HEADER_151 = "\n".join(["    -1", "   151", "OW-P101 reference", "NONE", "cavitas reference writer",
                        "01-Nov-26 08:00:00", "NONE", "    -1"]) + "\n"


def write(out, name, parts, manifest, fs_text="12800"):
    """parts: (bytes or text, expected float32) per channel."""
    with open(os.path.join(out, name), "wb") as f:
        for data, _ in parts:
            f.write(data if isinstance(data, bytes) else data.encode("ascii"))
    prefix = name.rsplit(".", 1)[0]
    for c, (_, expected) in enumerate(parts):
        expected.astype("<f4").tofile(os.path.join(out, f"{prefix}.ch{c}.f32"))
    manifest.append(f"{name} {len(parts)} {fs_text} {FRAMES} {prefix}")


def main():
    if len(sys.argv) != 2:
        print("usage: write_uff58.py OUT_DIR", file=sys.stderr)
        return 2
    out = sys.argv[1]
    os.makedirs(out, exist_ok=True)
    x = samples()
    manifest = []
    write(out, "ascii_single.uff", [ascii_dataset(c, v, False) for c, v in enumerate(x)], manifest)
    write(out, "ascii_double.uff", [ascii_dataset(c, v, True) for c, v in enumerate(x)], manifest)
    write(out, "binary_le_single.uff", [binary_dataset(c, v, False, False) for c, v in enumerate(x)], manifest)
    write(out, "binary_be_double.uff", [binary_dataset(c, v, True, True) for c, v in enumerate(x)], manifest)
    crlf = [ascii_dataset(c, v, False) for c, v in enumerate(x)]
    crlf = [(HEADER_151 + crlf[0][0], crlf[0][1]), crlf[1]]
    crlf = [(t.replace("\n", "\r\n"), e) for t, e in crlf]
    write(out, "header151_crlf.uff", crlf, manifest)
    write(out, "uneven_double.uff", [uneven_dataset(c, v) for c, v in enumerate(x)], manifest)
    # The same samples as float32 WAV; cavitas must read it bit for bit like binary_le_single.uff.
    wav = np.stack([v.astype(np.float32) for v in x], axis=1)
    wavfile.write(os.path.join(out, "samples.wav"), FS_HZ, wav)
    manifest.append(f"samples.wav 2 12800 {FRAMES} binary_le_single")
    with open(os.path.join(out, "manifest.txt"), "w") as f:
        f.write("\n".join(manifest) + "\n")
    print(f"wrote {len(manifest)} files to {out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
