#!/usr/bin/env python3
"""Write one recording in every text and MATLAB layout cavitas reads.

Usage: write_waveforms.py OUTDIR

Two channels, 12 800 Hz, 2 s: channel 0 a 160 Hz sine plus seeded noise,
channel 1 seeded noise, both float32. Files written (numpy and scipy only):

  samples.f32          the float32 samples, channel 0 then channel 1 (raw, little-endian)
  wave.wav             scipy.io.wavfile.write, 2-channel float32 WAV
  v5_matrix.mat        scipy.io.savemat, do_compression=False: x (N x 2 double), fs
  v5_vectors.mat       the same: ch0 (N x 1 single), ch1 (1 x N single), fs
  v7_matrix.mat        as v5_matrix.mat with do_compression=True
  v7_vectors.mat       as v5_vectors.mat with do_compression=True
  time.csv             time [s],accel [g],vel [mm/s]; '%.9g' (numpy), ',' delimited
  rate_comma.csv       "# sample_rate_hz = 12800", ';' delimited, decimal comma
  norate.csv           no header, no rate, space delimited (needs --sample-rate)

Exit status: 0 written, 77 if numpy or scipy cannot be imported.
"""

import os
import sys

try:
    import numpy as np
    import scipy.io
    import scipy.io.wavfile
except ImportError as exc:  # pragma: no cover - depends on the machine
    print(f"SKIP: numpy/scipy cannot be imported by {sys.executable}: {exc}")
    sys.exit(77)

FS_HZ = 12800
SECONDS = 2


def samples():
    n = FS_HZ * SECONDS
    rng = np.random.default_rng(20240611)
    t = np.arange(n) / FS_HZ
    ch0 = 0.5 * np.sin(2 * np.pi * 160.0 * t) + 0.05 * rng.standard_normal(n)
    ch1 = 0.2 * rng.standard_normal(n)
    return t, np.stack([ch0, ch1], axis=1).astype(np.float32)


def write_csv(path, columns, fmt, header_lines, delimiter, decimal_comma=False):
    lines = list(header_lines)
    for row in zip(*columns):
        cells = [fmt % v for v in row]
        if decimal_comma:
            cells = [c.replace(".", ",") for c in cells]
        lines.append(delimiter.join(cells))
    with open(path, "w", encoding="utf-8", newline="\n") as f:
        f.write("\n".join(lines) + "\n")


def main():
    if len(sys.argv) != 2:
        print(__doc__)
        return 2
    out = sys.argv[1]
    os.makedirs(out, exist_ok=True)
    t, x = samples()
    x.T.astype("<f4").tofile(os.path.join(out, "samples.f32"))
    scipy.io.wavfile.write(os.path.join(out, "wave.wav"), FS_HZ, x)
    matrix = {"x": x.astype(np.float64), "fs": float(FS_HZ)}
    vectors = {"ch0": x[:, 0:1], "ch1": x[:, 1:2].T, "fs": float(FS_HZ)}
    for name, compress in (("v5", False), ("v7", True)):
        scipy.io.savemat(os.path.join(out, f"{name}_matrix.mat"), matrix, do_compression=compress)
        scipy.io.savemat(os.path.join(out, f"{name}_vectors.mat"), vectors, do_compression=compress)
    ch0 = x[:, 0].astype(np.float64)
    ch1 = x[:, 1].astype(np.float64)
    write_csv(os.path.join(out, "time.csv"), (t, ch0, ch1), "%.9g", ["time [s],accel [g],vel [mm/s]"], ",")
    write_csv(os.path.join(out, "rate_comma.csv"), (ch0, ch1), "%.9g",
              ["# sample_rate_hz = 12800", "ch1 [m/s^2];ch2 [m/s^2]"], ";", decimal_comma=True)
    write_csv(os.path.join(out, "norate.csv"), (ch0, ch1), "%.9g", [], " ")
    print(f"wrote {x.shape[0]} frames x {x.shape[1]} channels to {out} (numpy {np.__version__}, scipy {scipy.__version__})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
