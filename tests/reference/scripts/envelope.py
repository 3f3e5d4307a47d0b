#!/usr/bin/python3
"""Reference envelope spectrum with numpy/scipy, for envelope_vs_scipy_test.cpp.

Usage: envelope.py FS BAND_LOW_HZ BAND_HIGH_HZ WINDOW NFFT < samples (one float per line)
Steps: band-limit by zeroing rfft bins outside [low, high], scipy.signal.hilbert for the
analytic signal, squared envelope, mean removed, scipy.signal.get_window (periodic),
scipy.signal.periodogram(scaling='spectrum', nfft=NFFT) one-sided.
Prints one power value per line (NFFT/2+1 lines).
"""
import sys

import numpy as np
from scipy import signal


def main():
    fs = float(sys.argv[1])
    low = float(sys.argv[2])
    high = float(sys.argv[3])
    window = sys.argv[4]
    nfft = int(sys.argv[5])
    x = np.array([float(v) for v in sys.stdin.read().split()], dtype=np.float64)
    n = x.size
    spectrum = np.fft.rfft(x)
    freqs = np.fft.rfftfreq(n, 1.0 / fs)
    spectrum[(freqs < low) | (freqs > high)] = 0.0
    band = np.fft.irfft(spectrum, n)
    envelope_sq = np.abs(signal.hilbert(band)) ** 2
    envelope_sq -= envelope_sq.mean()
    win = signal.get_window(window, n)
    _, power = signal.periodogram(envelope_sq, fs=fs, window=win, nfft=nfft,
                                  detrend=False, return_onesided=True, scaling='spectrum')
    sys.stdout.write("\n".join("%.10e" % p for p in power))
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
