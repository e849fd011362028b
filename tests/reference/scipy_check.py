#!/usr/bin/env python3
"""Cross-check cavitas DSP blocks against numpy/scipy on identical input.

Usage: scipy_check.py REFDUMP.json

REFDUMP.json is written by cavitas_refdump: the test signals (float32 values
widened to double, so nothing is lost) and what cavitas computed from them.
Every quantity is recomputed here with numpy/scipy and compared. One line is
printed per check: name, reference function with its library version, maximum
error, tolerance and PASS/FAIL; then a final line "N passed, M failed".

Exit status: 0 if all checks pass, 1 if any fails (or the file cannot be read),
77 if numpy/scipy cannot be imported (ctest's skip code).

Error measures (each check says which one it uses):
  rel       |a - b| / |b| for a scalar (|a - b| if b == 0).
  pointwise max_k |a_k - b_k| / max(|b_k|, floor * max|b|): relative bin by
            bin, but bins far below the largest value are measured against
            floor * max|b| so that near-zero bins cannot blow the ratio up.
  normwise  max_k |a_k - b_k| / max_k |b_k|: for signals that cross zero and
            for amplitude spectra with many near-empty bins.

Tolerances: cavitas works in float64 on FFTW, the reference in float64 on
numpy's pocketfft; both transforms are backward stable (error about
eps * log2(n) * norm, eps = 2.2e-16), and sums are taken in different orders.
The honest expectation is therefore 1e-13 or better; the tolerance used for
"same algorithm, different library" is 1e-9, far above rounding and far below
any real mistake (a wrong window, scale, bin or overlap gives errors of 1e-3 to
1). Exceptions are stated where they occur.
"""

import json
import math
import sys

try:
    import numpy as np
    import scipy
    import scipy.optimize
    import scipy.signal
    import scipy.special
    import scipy.stats
except ImportError as exc:  # pragma: no cover - depends on the machine
    print(f"SKIP: numpy/scipy cannot be imported by {sys.executable}: {exc}")
    print("      install python3-scipy (Debian) or point CMake at an interpreter that has it")
    sys.exit(77)

SCIPY = f"scipy {scipy.__version__}"
NUMPY = f"numpy {np.__version__}"

# Same algorithm, float64, different FFT library / summation order (see above).
TOL_F64 = 1e-9
# Integer-valued or exactly reproducible quantities.
TOL_EXACT = 0.0
# "pointwise" floor for PSDs: a bin smaller than 1e-10 of the largest bin is
# measured against 1e-10 * max instead of its own value. An FFT spreads the
# rounding error of the large bins over all bins, so the relative error of a
# bin 10 decades down is not a property of the algorithm. None of the test
# PSDs spans that much range, so in practice every bin is checked relatively.
PSD_FLOOR = 1e-10
# float32 quantisation: one ulp of a float32 is 2^-24 relative. When a
# reference keeps the out-of-band part of the float32 rounding noise that
# cavitas' ideal band-pass removes, the two squared envelopes may differ by a
# few float32 ulps of the peak; 16 ulps is the stated bound.
TOL_F32_QUANT = 16 * 2.0**-24


class Report:
    def __init__(self):
        self.passed = 0
        self.failed = 0

    def check(self, name, reference, err, tol):
        ok = bool(err <= tol)  # NaN compares False -> FAIL
        if ok:
            self.passed += 1
        else:
            self.failed += 1
        print(f"{name:<52} {reference:<62} max_err={err:9.3e}  tol={tol:8.1e}  {'PASS' if ok else 'FAIL'}")
        return ok

    def fail(self, name, reference, why):
        self.failed += 1
        print(f"{name:<52} {reference:<62} {why}  FAIL")


def rel(a, b):
    a, b = float(a), float(b)
    d = abs(a - b)
    return d / abs(b) if b != 0.0 else d


def pointwise(a, b, floor):
    a, b = np.asarray(a, dtype=np.float64), np.asarray(b, dtype=np.float64)
    scale = np.maximum(np.abs(b), floor * np.max(np.abs(b)))
    scale[scale == 0.0] = 1.0
    return float(np.max(np.abs(a - b) / scale))


def normwise(a, b):
    a, b = np.asarray(a, dtype=np.float64), np.asarray(b, dtype=np.float64)
    m = float(np.max(np.abs(b)))
    return float(np.max(np.abs(a - b))) / (m if m > 0.0 else 1.0)


def same_length(rep, name, a, b):
    if len(a) != len(b):
        rep.fail(name, "length", f"cavitas has {len(a)} values, reference {len(b)}")
        return False
    return True


def load_signals(rep, doc):
    """Input arrays as float64; float32 signals must be exactly float32 values."""
    signals = {}
    for name, s in doc["signals"].items():
        x = np.asarray(s["x"], dtype=np.float64)
        if s["dtype"] == "float32":
            # Rests on: the JSON holds float32 values printed round-trip exact;
            # pushing them through np.float32 must change nothing, so numpy
            # sees the very samples cavitas saw.
            x32 = x.astype(np.float32).astype(np.float64)
            rep.check(f"input/{name}/float32-exact", f"numpy.float32 round trip [{NUMPY}]",
                      float(np.count_nonzero(x32 != x)), TOL_EXACT)
            x = x32
        signals[name] = x
    return signals


def check_moments(rep, entry, x):
    sig = entry["signal"]
    mean = float(np.mean(x))
    d = x - mean
    rms = float(np.sqrt(np.mean(d * d)))
    peak = float(np.max(np.abs(d)))
    # Non-excess population kurtosis m4 / m2^2 about the mean.
    kurt = float(scipy.stats.kurtosis(x, fisher=False, bias=True))
    for kind in ("batch", "stream"):
        m = entry[kind]
        base = f"moments/{sig}/{kind}"
        # Rests on: the sample count is the input length.
        rep.check(f"{base}/count", f"len(x) [{NUMPY}]", abs(m["count"] - len(x)), TOL_EXACT)
        # Rests on: mean = sum/N; numpy sums pairwise, cavitas in sequence,
        # so the difference is summation rounding; measured against the rms
        # because the mean of noise is near zero.
        rep.check(f"{base}/mean", f"numpy.mean [{NUMPY}]", abs(m["mean"] - mean) / rms, TOL_F64)
        # Rests on: AC rms = sqrt(mean((x - mean)^2)), float64 in both.
        rep.check(f"{base}/rms", f"numpy sqrt(mean((x-mean)^2)) [{NUMPY}]", rel(m["rms"], rms), TOL_F64)
        # Rests on: peak = max |x - mean|; only the mean's rounding enters.
        rep.check(f"{base}/peak", f"numpy max|x-mean| [{NUMPY}]", rel(m["peak"], peak), TOL_F64)
        rep.check(f"{base}/crest", f"numpy peak/rms [{NUMPY}]", rel(m["crest"], peak / rms), TOL_F64)
        # Rests on: scipy's bias=True, fisher=False kurtosis is m4/m2^2 with
        # population central moments, the definition cavitas documents. The
        # streaming path converts raw moments about a shift to central ones;
        # with the shift at the first sample the cancellation is mild, so the
        # same float64 tolerance applies.
        rep.check(f"{base}/kurtosis", f"scipy.stats.kurtosis(fisher=False,bias=True) [{SCIPY}]",
                  rel(m["kurtosis"], kurt), TOL_F64)


def check_welch(rep, entry, x):
    sig = entry["signal"]
    n = int(entry["segment_size"])
    fs = float(entry["fs"])
    base = f"welch/{sig}/n{n}"
    ref_call = "scipy.signal.welch(hann,n,n//2,constant,density)"
    f, pxx = scipy.signal.welch(x, fs, window="hann", nperseg=n, noverlap=n // 2, detrend="constant",
                                scaling="density", return_onesided=True)
    # Rests on: a spectrogram with the same framing has one column per Welch
    # segment; cavitas must have averaged exactly that many frames although
    # the data came in uneven blocks (its streaming overlap buffer).
    _, t, _ = scipy.signal.spectrogram(x, fs, window="hann", nperseg=n, noverlap=n // 2, detrend="constant",
                                       scaling="density", mode="psd")
    rep.check(f"{base}/frames", f"len(scipy.signal.spectrogram t) [{SCIPY}]", abs(entry["frames"] - len(t)),
              TOL_EXACT)
    # Rests on: bin width fs/n, scipy's frequency grid from rfftfreq.
    rep.check(f"{base}/bin_hz", f"scipy.signal.welch f[1]-f[0] [{SCIPY}]", rel(entry["bin_hz"], f[1] - f[0]),
              TOL_F64)
    psd = np.asarray(entry["psd"], dtype=np.float64)
    if same_length(rep, f"{base}/psd", psd, pxx):
        # Rests on: identical framing (50 % overlap, dropped incomplete tail),
        # per-frame mean removal, periodic Hann, |X|^2/(fs sum w^2), one-sided
        # doubling except DC/Nyquist, mean over frames. float64 both sides,
        # FFTW vs pocketfft.
        rep.check(f"{base}/psd", f"{ref_call} [{SCIPY}]", pointwise(psd, pxx, PSD_FLOOR), TOL_F64)
    df = f[1] - f[0]
    for b in entry["band_power"]:
        lo, hi = float(b["lo_hz"]), float(b["hi_hz"])
        # Bins whose centre lies in [lo, hi], edges inclusive; the slack of
        # 1e-9 bins only absorbs the last-ulp difference between k*fs/n and
        # scipy's rfftfreq grid for edges placed exactly on a bin.
        slack = 1e-9 * df
        mask = (f >= lo - slack) & (f <= hi + slack)
        name = f"{base}/band_power[{lo:g},{hi:g}]"
        if not np.any(mask):
            rep.fail(name, "band selection", "no scipy bin inside the band")
            continue
        ref = float(np.sum(pxx[mask]) * df)
        # Rests on: band power = sum(PSD over the band's bins) * df, using
        # scipy's PSD, so this also re-tests the PSD and the bin selection.
        rep.check(name, f"sum(scipy.signal.welch Pxx[band])*df [{SCIPY}]", rel(b["power"], ref), TOL_F64)


def check_envelope(rep, entry, signals, meta):
    sig = entry["signal"]
    n = int(entry["segment_size"])
    fs = float(entry["fs"])
    off = int(entry["offset"])
    x = signals[sig][off:off + n]
    base = f"envelope/{sig}"
    band = np.asarray(entry["band_signal"], dtype=np.float64)
    sq = np.asarray(entry["squared_envelope"], dtype=np.float64)
    ses = np.asarray(entry["envelope_spectrum"], dtype=np.float64)
    if len(x) != n:
        rep.fail(f"{base}/input", "segment", f"signal has {len(x)} samples from offset {off}, need {n}")
        return
    ok = same_length(rep, f"{base}/band_signal", band, x)
    ok = same_length(rep, f"{base}/squared_envelope", sq, x) and ok
    ok = same_length(rep, f"{base}/envelope_spectrum", ses, np.zeros(n // 2 + 1)) and ok
    if not ok:
        return

    # --- exact numpy reproduction of the documented algorithm -------------
    bin_hz = fs / n
    k_lo = max(int(math.ceil(entry["band_low_hz"] / bin_hz)), 1)
    k_hi = min(int(math.floor(entry["band_high_hz"] / bin_hz)), (n - 1) // 2)
    X = np.fft.rfft(x)
    Z = np.zeros(n, dtype=np.complex128)
    Z[k_lo:k_hi + 1] = 2.0 * X[k_lo:k_hi + 1]
    z = np.fft.ifft(Z)  # includes the 1/n
    ref_band = z.real
    ref_sq = np.abs(z) ** 2
    w = scipy.signal.get_window("hann", n)  # periodic (fftbins=True)
    ref_ses = 2.0 * np.abs(np.fft.rfft((ref_sq - ref_sq.mean()) * w)) / np.sum(w)
    ref_ses[0] = 0.0
    # Rests on: ideal FFT band-pass, bins k_lo..k_hi kept and doubled, inverse
    # complex FFT / n; Re z. float64, FFTW vs pocketfft; normwise because the
    # band signal crosses zero.
    rep.check(f"{base}/band_signal", f"numpy.fft rfft->mask->ifft Re [{NUMPY}]", normwise(band, ref_band), TOL_F64)
    # Rests on: |z|^2 of the same analytic band signal.
    rep.check(f"{base}/squared_envelope", f"numpy.fft |ifft(mask*2*rfft)|^2 [{NUMPY}]", normwise(sq, ref_sq),
              TOL_F64)
    rep.check(f"{base}/mean_squared_envelope", f"numpy.mean(|z|^2) [{NUMPY}]",
              rel(entry["mean_squared_envelope"], ref_sq.mean()), TOL_F64)
    # Rests on: SES = 2|rfft((|z|^2 - mean) w)| / sum w with scipy's periodic
    # Hann, DC forced to 0; normwise (most bins are near empty).
    rep.check(f"{base}/envelope_spectrum", f"numpy.fft + scipy.signal.get_window('hann') [{SCIPY}]",
              normwise(ses, ref_ses), TOL_F64)
    rep.check(f"{base}/envelope_spectrum[0]", "DC bin must be exactly 0", abs(float(ses[0])), TOL_EXACT)

    note = entry.get("note", "")
    if "hilbert_exact" in note:
        # Input with only odd bins (x[i+n/2] = -x[i], exact in float32): DC and
        # Nyquist are exactly absent, and the band is the whole 0..fs/2, so
        # the ideal band-pass keeps every non-zero bin. scipy's FFT Hilbert
        # analytic signal of x itself must then be cavitas' z.
        za = scipy.signal.hilbert(x)
        rep.check(f"{base}/hilbert_sq_env", f"|scipy.signal.hilbert(x)|^2 [{SCIPY}]", normwise(sq, np.abs(za) ** 2),
                  TOL_F64)
        rep.check(f"{base}/hilbert_real", f"Re scipy.signal.hilbert(x) [{SCIPY}]", normwise(band, za.real), TOL_F64)
    if "hilbert_band_limited" in note:
        # (a) cavitas' band signal is band-limited to double precision, so
        # scipy's Hilbert analytic signal of it must reproduce cavitas' |z|^2:
        # the imaginary part cavitas made is the Hilbert transform of its real
        # part. float64, 1e-9.
        za = scipy.signal.hilbert(band)
        rep.check(f"{base}/hilbert(band_signal)_sq_env", f"|scipy.signal.hilbert(band_signal)|^2 [{SCIPY}]",
                  normwise(sq, np.abs(za) ** 2), TOL_F64)
        # (b) The float32 input: tones at exact bins inside the band, but the
        # float32 rounding adds broadband noise of <= 1/2 ulp per sample, which
        # hilbert(x) keeps and the band-pass drops. Limited by float32
        # quantisation, hence TOL_F32_QUANT rather than 1e-9.
        zx = scipy.signal.hilbert(x)
        rep.check(f"{base}/hilbert(x_float32)_sq_env", f"|scipy.signal.hilbert(x)|^2 [{SCIPY}]",
                  normwise(sq, np.abs(zx) ** 2), TOL_F32_QUANT)
        tones = meta[sig].get("tones")
        if tones:
            # (c) Closed form: for cosines A_k cos(2 pi b_k i/n + p_k) at exact
            # bins inside the band the analytic signal is sum A_k e^{j(...)},
            # computed here in float64 from the tone parameters; cavitas' input
            # was the float32 rounding, so the same quantisation bound applies.
            i = np.arange(n)
            za_true = np.zeros(n, dtype=np.complex128)
            for t in tones:
                za_true += t["amp"] * np.exp(1j * (2.0 * np.pi * ((t["bin"] * i) % n) / n + t["phase"]))
            rep.check(f"{base}/closed_form_sq_env", f"|sum A e^(j(2 pi b i/n + p))|^2 [{NUMPY}]",
                      normwise(sq, np.abs(za_true) ** 2), TOL_F32_QUANT)


def check_decimate(rep, entry, x):
    """Decimator (signal/decimate): the taps are scipy.signal.firwin's Blackman design,
    and the output is scipy.signal.lfilter with them, every factor-th sample."""
    factor = entry["factor"]
    taps = np.asarray(entry["taps"])
    ref_taps = scipy.signal.firwin(entry["numtaps"], entry["cutoff"], window="blackman")
    rep.check(f"decimate/{factor}/taps", f"scipy.signal.firwin blackman [{SCIPY}]",
              float(np.max(np.abs(taps - ref_taps))), TOL_F64)
    y = np.asarray(entry["output"])
    ref = scipy.signal.lfilter(ref_taps, 1.0, x)[::factor][: len(y)]
    if same_length(rep, f"decimate/{factor}/output", y, ref):
        # cavitas filters in single precision: numtaps products summed in float32 carry
        # about sqrt(numtaps) ulps of the output's scale (sqrt(193) x 6e-8 = 8e-7); 2e-6 bounds it.
        rep.check(f"decimate/{factor}/output", f"scipy.signal.lfilter [{SCIPY}]", normwise(y, ref), 2e-6)


def check_rank_sum(rep, entry):
    """Mann-Whitney U, Hodges-Lehmann shift and Cliff's delta (models/rank_tests)."""
    name = entry["name"]
    a = np.asarray(entry["a"], dtype=np.float64)
    b = np.asarray(entry["b"], dtype=np.float64)
    method = "exact" if entry["exact"] else "asymptotic"
    ref = scipy.stats.mannwhitneyu(a, b, alternative="two-sided", method=method, use_continuity=True)
    rep.check(f"rank_sum/{name}/U", f"scipy.stats.mannwhitneyu [{SCIPY}]", rel(entry["u"], ref.statistic), TOL_F64)
    rep.check(f"rank_sum/{name}/p ({method})", f"scipy.stats.mannwhitneyu [{SCIPY}]",
              rel(entry["p_two_sided"], ref.pvalue), TOL_F64)
    diffs = (b[None, :] - a[:, None]).ravel()
    rep.check(f"rank_sum/{name}/hodges_lehmann", f"numpy.median of pairwise differences [{NUMPY}]",
              abs(entry["hl_shift"] - float(np.median(diffs))), TOL_F64)
    cliff = (np.count_nonzero(diffs > 0) - np.count_nonzero(diffs < 0)) / diffs.size
    rep.check(f"rank_sum/{name}/cliffs_delta", f"numpy definition P(b>a)-P(b<a) [{NUMPY}]",
              abs(entry["cliffs_delta"] - cliff), TOL_F64)


def check_trend(rep, entry):
    """Theil-Sen slope and the Mann-Kendall test against time (models/rank_tests)."""
    name = entry["name"]
    t = np.asarray(entry["t"], dtype=np.float64)
    y = np.asarray(entry["y"], dtype=np.float64)
    ts = scipy.stats.theilslopes(y, t)
    rep.check(f"trend/{name}/theil_sen_slope", f"scipy.stats.theilslopes [{SCIPY}]", rel(entry["slope"], ts[0]), TOL_F64)
    method = "exact" if entry["exact"] else "asymptotic"
    kt = scipy.stats.kendalltau(t, y, method=method)
    rep.check(f"trend/{name}/tau_b", f"scipy.stats.kendalltau [{SCIPY}]", abs(entry["tau"] - kt.correlation), TOL_F64)
    rep.check(f"trend/{name}/p ({method})", f"scipy.stats.kendalltau [{SCIPY}]", rel(entry["p_two_sided"], kt.pvalue),
              TOL_F64)


def check_reliability(rep, entry):
    """Reliability bins, ECE, MCE and Brier score (models/calibration), binned by numpy.digitize."""
    name = entry["name"]
    conf = np.asarray(entry["confidence"], dtype=np.float64)
    correct = np.asarray(entry["correct"], dtype=np.float64)
    nbins = int(entry["nbins"])
    edges = np.arange(nbins + 1) / nbins  # the doubles k/B, as cavitas computes them
    # right=False: edges[i-1] <= x < edges[i]; on the inner edges this gives bin b for
    # [b/B, (b+1)/B), and 1.0 lands in the last bin.
    idx = np.digitize(conf, edges[1:-1], right=False)
    counts = np.bincount(idx, minlength=nbins)
    bins = entry["bins"]
    if not same_length(rep, f"reliability/{name}/bins", bins, counts):
        return
    got_counts = np.array([b["count"] for b in bins])
    rep.check(f"reliability/{name}/counts", f"numpy.digitize right=False [{NUMPY}]",
              float(np.max(np.abs(got_counts - counts))), TOL_EXACT)
    rep.check(f"reliability/{name}/edges", f"numpy k/B [{NUMPY}]",
              max(max(abs(b["low"] - edges[k]), abs(b["high"] - edges[k + 1])) for k, b in enumerate(bins)), TOL_EXACT)
    ece, mce, err_means = 0.0, 0.0, 0.0
    for k in range(nbins):
        if counts[k] == 0:
            if bins[k]["mean_confidence"] is not None or bins[k]["accuracy"] is not None:
                rep.fail(f"reliability/{name}/empty bin {k}", "definition", "an empty bin must have no mean (null)")
            continue
        mc, acc = float(np.mean(conf[idx == k])), float(np.mean(correct[idx == k]))
        err_means = max(err_means, abs(bins[k]["mean_confidence"] - mc), abs(bins[k]["accuracy"] - acc))
        ece += counts[k] / conf.size * abs(acc - mc)
        mce = max(mce, abs(acc - mc))
    rep.check(f"reliability/{name}/bin means", f"numpy.mean per bin [{NUMPY}]", err_means, TOL_F64)
    rep.check(f"reliability/{name}/ece", "Guo et al. 2017 definition, numpy", abs(entry["ece"] - ece), TOL_F64)
    rep.check(f"reliability/{name}/mce", "Guo et al. 2017 definition, numpy", abs(entry["mce"] - mce), TOL_F64)
    rep.check(f"reliability/{name}/brier", f"numpy mean squared error [{NUMPY}]",
              abs(entry["brier"] - float(np.mean((conf - correct) ** 2))), TOL_F64)


def check_platt(rep, entry):
    """Platt scaling (models/calibration) against scipy.optimize.minimize on the same loss."""
    name = entry["name"]
    s = np.asarray(entry["score"], dtype=np.float64)
    y = np.asarray(entry["positive"], dtype=np.int64)
    n_pos = int(y.sum())
    n_neg = y.size - n_pos
    t = np.where(y == 1, (n_pos + 1) / (n_pos + 2), 1 / (n_neg + 2))  # Platt's smoothed targets

    def loss(x):  # cross-entropy of p = 1/(1 + e^f) against t: log(1 + e^f) - (1 - t) f
        f = x[0] * s + x[1]
        return float(np.sum(np.logaddexp(0.0, f) - (1.0 - t) * f))

    def grad(x):
        p = scipy.special.expit(-(x[0] * s + x[1]))
        return np.array([np.sum((t - p) * s), np.sum(t - p)])

    def hess(x):
        p = scipy.special.expit(-(x[0] * s + x[1]))
        w = p * (1.0 - p)
        return np.array([[np.sum(w * s * s), np.sum(w * s)], [np.sum(w * s), np.sum(w)]])

    ref = scipy.optimize.minimize(loss, [0.0, math.log((n_neg + 1) / (n_pos + 1))], jac=grad, hess=hess,
                                  method="trust-exact", options={"gtol": 1e-10})
    # Both minimise the same strictly convex loss; each stops within ~1e-10 of a zero
    # gradient, so the parameters agree to about that over the Hessian's smaller
    # eigenvalue (2.0 and 60 on these data, measured): 1e-8 leaves room and still
    # catches a wrong target or sign (errors of 1e-3 and more).
    rep.check(f"platt/{name}/a", f"scipy.optimize.minimize trust-exact [{SCIPY}]", abs(entry["a"] - ref.x[0]), 1e-8)
    rep.check(f"platt/{name}/b", f"scipy.optimize.minimize trust-exact [{SCIPY}]", abs(entry["b"] - ref.x[1]), 1e-8)
    rep.check(f"platt/{name}/gradient", "numpy gradient of the same loss at cavitas' (a, b)",
              float(np.max(np.abs(grad([entry["a"], entry["b"]])))), 1e-8)


def check_pav(rep, entry):
    """Pool-adjacent-violators (models/calibration) against bounded least squares."""
    name = entry["name"]
    y = np.asarray(entry["y"], dtype=np.float64)
    w = np.asarray(entry["weight"], dtype=np.float64) if entry["weight"] else np.ones_like(y)
    fit = np.asarray(entry["fit"], dtype=np.float64)
    if not same_length(rep, f"pav/{name}/fit", fit, y):
        return
    # The monotone fit as f = C u (C lower triangular ones: f_i = u_0 + ... + u_i) with
    # u_0 free and the increments u_1.. >= 0, minimising sum w (f - y)^2: an independent
    # route to the same unique minimiser.
    n = y.size
    c = np.tril(np.ones((n, n)))
    sw = np.sqrt(w)
    lower = np.r_[-np.inf, np.zeros(n - 1)]
    ref = scipy.optimize.lsq_linear(sw[:, None] * c, sw * y, bounds=(lower, np.full(n, np.inf)), method="bvls",
                                    tol=1e-14)
    # bvls solves the active set exactly (up to a least-squares solve in float64).
    rep.check(f"pav/{name}/fit", f"scipy.optimize.lsq_linear bvls [{SCIPY}]", normwise(fit, c @ ref.x), TOL_F64)


def check_line_rms(rep, entry):
    """RMS amplitude per line and overall velocity (models/severity) against scipy.signal.welch.

    scaling='spectrum' gives each line's mean square (a bin-centred sine of amplitude A:
    A^2/2 at its line), so sqrt of it is the RMS amplitude per line cavitas shows; the
    overall velocity is sum(Pxx_density / (2 pi f)^2) * df over 10-1000 Hz."""
    name = entry["name"]
    n, fs, phase = entry["segment"], entry["fs_hz"], entry["phase"]
    t = np.arange(entry["samples"], dtype=np.float64) / fs
    x = np.zeros_like(t)
    for tone in entry["tones"]:
        x += tone["amplitude"] * np.sin(2 * np.pi * tone["hz"] * t + phase)
    kw = dict(window="hann", nperseg=n, noverlap=n // 2, detrend="constant", return_onesided=True)
    f, spec = scipy.signal.welch(x, fs, scaling="spectrum", **kw)
    _, dens = scipy.signal.welch(x, fs, scaling="density", **kw)
    got = np.asarray(entry["line_rms"], dtype=np.float64)
    if not same_length(rep, f"line_rms/{name}", got, f):
        return
    # Compared as powers (line_rms^2 against Pxx): a square root would magnify the
    # rounding noise of the near-empty lines between the tones.
    rep.check(f"line_rms/{name}/per_line", f"scipy.signal.welch spectrum = line_rms^2 [{SCIPY}]",
              pointwise(got ** 2, spec, 1e-9), TOL_F64)
    df = f[1] - f[0]
    for tone in entry["tones"]:
        k = int(round(tone["hz"] / df))
        # A bin-centred sine: A / sqrt(2) at its line, exactly (no scalloping).
        rep.check(f"line_rms/{name}/{tone['hz']:g}hz_is_A_over_root2", "A/sqrt(2) (definition of RMS)",
                  rel(got[k], tone["amplitude"] / math.sqrt(2.0)), 1e-9)
    band = (f >= 10.0) & (f <= 1000.0)
    ref = math.sqrt(float(np.sum(dens[band] / (2 * np.pi * f[band]) ** 2) * df))
    rep.check(f"line_rms/{name}/overall_velocity", f"sum(welch density/(2 pi f)^2)*df [{SCIPY}]",
              rel(entry["overall_velocity_m_s"], ref), TOL_F64)
    hand = math.sqrt(sum((tn["amplitude"] / (2 * math.pi * tn["hz"])) ** 2 / 2 for tn in entry["tones"]
                         if 10.0 <= tn["hz"] <= 1000.0))
    # The hand sum of the in-band tones: within 1 % (the window spreads a tone over lines whose
    # 1/f^2 weights differ slightly; our tolerance).
    rep.check(f"line_rms/{name}/overall_velocity_hand_sum", "sqrt(sum (A/(2 pi f))^2/2) (calculus)",
              rel(entry["overall_velocity_m_s"], hand), 1e-2)


def main(argv):
    if len(argv) != 2:
        print("usage: scipy_check.py REFDUMP.json")
        print("0 passed, 1 failed")
        return 1
    print(f"reference: python {sys.version.split()[0]}, {NUMPY}, {SCIPY}; data: {argv[1]}")
    rep = Report()
    try:
        with open(argv[1], "r", encoding="utf-8") as fh:
            doc = json.load(fh)
        signals = load_signals(rep, doc)
        sections = {"moments": check_moments, "welch": check_welch, "envelope": check_envelope}
        for key, fn in sections.items():
            entries = doc.get(key, [])
            if not entries:
                rep.fail(f"structure/{key}", "refdump JSON", "section missing or empty")
            for entry in entries:
                if key == "envelope":
                    fn(rep, entry, signals, doc["signals"])
                else:
                    fn(rep, entry, signals[entry["signal"]])
        for entry in doc.get("decimate", []):
            check_decimate(rep, entry, signals[entry["signal"]])
        if not doc.get("decimate"):
            rep.fail("structure/decimate", "refdump JSON", "section missing or empty")
        for key, fn in {"rank_sum": check_rank_sum, "trend": check_trend, "reliability": check_reliability,
                        "platt": check_platt, "pav": check_pav, "line_rms": check_line_rms}.items():
            entries = doc.get(key, [])
            if not entries:
                rep.fail(f"structure/{key}", "refdump JSON", "section missing or empty")
            for entry in entries:
                fn(rep, entry)
    except (OSError, ValueError, KeyError, TypeError) as exc:
        rep.fail("structure/read", "refdump JSON", f"{type(exc).__name__}: {exc}")
    print(f"{rep.passed} passed, {rep.failed} failed")
    return 1 if rep.failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
