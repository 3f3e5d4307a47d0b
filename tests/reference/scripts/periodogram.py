"""Reference one-sided periodograms from Debian's scipy for the scaling tests.

Usage: periodogram.py SIGNALS.f32 MANIFEST.txt OUT.f64
SIGNALS.f32 holds every case's samples back to back (raw little-endian float32).
MANIFEST.txt has one case per line: OFFSET LENGTH FS WINDOW NFFT DETREND
  WINDOW: a scipy get_window name (hann, hamming, blackman, blackmanharris, flattop),
          kaiser:BETA, or cosine:a0,a1,... (general cosine sum, periodic)
  DETREND: constant or none
OUT.f64 receives, per case, the 'spectrum' bins then the 'density' bins (nfft//2+1 each),
as raw little-endian float64, computed with scipy.signal.periodogram (return_onesided=True).
"""
import sys

import numpy as np
from scipy import signal


def make_window(spec, n):
    if spec.startswith("kaiser:"):
        return signal.get_window(("kaiser", float(spec.split(":", 1)[1])), n, fftbins=True)
    if spec.startswith("cosine:"):
        coeffs = [float(c) for c in spec.split(":", 1)[1].split(",")]
        return signal.windows.general_cosine(n, coeffs, sym=False)
    return signal.get_window(spec, n, fftbins=True)  # periodic (DFT-even) form


def main():
    samples = np.fromfile(sys.argv[1], dtype="<f4").astype(np.float64)
    out = []
    with open(sys.argv[2]) as manifest:
        for line in manifest:
            if not line.strip():
                continue
            offset, length, fs, win, nfft, detrend = line.split()
            x = samples[int(offset):int(offset) + int(length)]
            w = make_window(win, len(x))
            det = "constant" if detrend == "constant" else False
            for scaling in ("spectrum", "density"):
                _, p = signal.periodogram(x, fs=float(fs), window=w, nfft=int(nfft),
                                          detrend=det, return_onesided=True, scaling=scaling)
                out.append(p.astype("<f8"))
    np.concatenate(out).tofile(sys.argv[3])


if __name__ == "__main__":
    main()
