#!/usr/bin/env python3
"""The indicators of `cavitas analyze`, computed the way a practitioner would
with numpy/scipy, timed inside Python (start-up and imports excluded).

Usage: scipy_pipeline.py RECORDING.wav HF_LOW_HZ HF_HIGH_HZ [REPS]

Reads a mono WAV (scipy.io.wavfile), then per run: Welch PSD and band levels
(scipy.signal.welch), time statistics (rms, peak, crest, kurtosis;
scipy.stats.kurtosis) per 1 s segment, a Butterworth band-pass of the HF band
(scipy.signal.butter + sosfiltfilt) and the Hilbert envelope of the whole
record (scipy.signal.hilbert) with its squared-envelope spectrum, the STFT
spectral kurtosis (scipy.signal.stft), and a fast kurtogram of the whole
record, 7 levels (the binary and ternary quasi-analytic filter-bank tree of
Antoni 2007, with scipy.signal.upfirdn filtering and decimating in one step). Prints one JSON object: the median
seconds of each stage and of the whole over REPS runs (default 3), and the
decode time.
"""

import json
import sys
import time

import numpy as np
import scipy
import scipy.io.wavfile
import scipy.signal
import scipy.stats


def kurtosis_complex(c):
    p = np.abs(c) ** 2
    m2 = p.mean()
    return max(0.0, (p * p).mean() / (m2 * m2) - 2.0) if m2 > 0 else 0.0


def fast_kurtogram(x, levels):
    """Antoni's 1/3-binary tree: at each binary level every band is split in two by
    quasi-analytic low/high FIRs and decimated by 2; between binary levels a
    3-band split (decimated by 3) gives the 1.6, 2.6, ... levels."""
    n = np.arange(16)
    h = scipy.signal.firwin(16, 0.5) * np.exp(1j * 0.25 * np.pi * n)
    g = h * np.exp(1j * np.pi * n)
    n3 = np.arange(25)
    h3 = scipy.signal.firwin(25, 1.0 / 3.0)
    t = [h3 * np.exp(1j * np.pi * (2 * k + 1) / 6.0 * n3) for k in range(3)]
    kmap = [[scipy.stats.kurtosis(x, fisher=True)]]
    nodes = [x.astype(np.complex128)]
    for level in range(1, levels + 1):
        # ternary split of the previous level's nodes
        row = []
        # upfirdn filters and keeps every 3rd / 2nd output only (polyphase), the
        # efficient scipy way to filter-and-decimate.
        for c in nodes:
            for k in range(3):
                row.append(kurtosis_complex(scipy.signal.upfirdn(t[k], c, down=3)[: len(c) // 3]))
        kmap.append(row)
        nxt = []
        for c in nodes:
            nxt.append(scipy.signal.upfirdn(h, c, down=2)[: len(c) // 2])
            nxt.append(scipy.signal.upfirdn(g, c, down=2)[: len(c) // 2])
        nodes = nxt
        kmap.append([kurtosis_complex(c) for c in nodes])
    return kmap


def run_once(x, fs, lo, hi):
    stages = {}
    t0 = time.perf_counter()
    nseg = int(fs)
    f, pxx = scipy.signal.welch(x, fs, nperseg=min(16384, nseg // 2))
    for a, b in ((lo, hi), (10.0, min(1000.0, lo))):
        sel = (f >= a) & (f <= b)
        10 * np.log10(np.trapz(pxx[sel], f[sel]))
    segs = x[: len(x) // nseg * nseg].reshape(-1, nseg)
    rms = np.sqrt(np.mean((segs - segs.mean(axis=1, keepdims=True)) ** 2, axis=1))
    peak = np.max(np.abs(segs - segs.mean(axis=1, keepdims=True)), axis=1)
    peak / rms
    scipy.stats.kurtosis(segs, axis=1, fisher=False)
    t1 = time.perf_counter()
    stages["welch_band_time_stats_s"] = t1 - t0
    sos = scipy.signal.butter(4, [lo, hi], btype="bandpass", fs=fs, output="sos")
    band = scipy.signal.sosfiltfilt(sos, x)
    env = np.abs(scipy.signal.hilbert(band)) ** 2
    ses = np.abs(np.fft.rfft(env - env.mean())) / len(env)
    scipy.stats.kurtosis(band.reshape(-1, nseg)[:, :], axis=1, fisher=False) if len(band) % nseg == 0 else None
    t2 = time.perf_counter()
    stages["bandpass_hilbert_envelope_s"] = t2 - t1
    _, _, z = scipy.signal.stft(x, fs, nperseg=1024, noverlap=768)
    p = np.abs(z) ** 2
    sk = (p * p).mean(axis=1) / (p.mean(axis=1) ** 2) - 2.0
    t3 = time.perf_counter()
    stages["stft_spectral_kurtosis_s"] = t3 - t2
    fast_kurtogram(x, 7)  # once over the whole record, as it is usually run
    t4 = time.perf_counter()
    stages["fast_kurtogram_s"] = t4 - t3
    stages["total_s"] = t4 - t0
    return stages, float(ses.max()) + float(sk.mean())


def main(argv):
    if len(argv) < 4:
        print(__doc__)
        return 2
    path, lo, hi = argv[1], float(argv[2]), float(argv[3])
    reps = int(argv[4]) if len(argv) > 4 else 3
    t0 = time.perf_counter()
    fs, data = scipy.io.wavfile.read(path)
    x = data.astype(np.float64)
    if data.dtype.kind == "i":
        x /= float(np.iinfo(data.dtype).max)
    decode = time.perf_counter() - t0
    runs = [run_once(x, fs, lo, hi)[0] for _ in range(reps)]
    out = {k: float(np.median([r[k] for r in runs])) for k in runs[0]}
    out["decode_s"] = decode
    out["reps"] = reps
    out["numpy"] = np.__version__
    out["scipy"] = scipy.__version__
    out["audio_s"] = len(x) / fs
    print(json.dumps(out))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
