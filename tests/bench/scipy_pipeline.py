#!/usr/bin/python3
"""The comparison pipeline for analysis_bench: the same analysis done the usual numpy/scipy way.

Reads a mono WAV, computes a Hann spectrogram (block, 50 % overlap, 'spectrum' scaling),
averages the frames, and finds the strongest peaks with scipy.signal.find_peaks. Times itself
and prints one JSON line: samples, frames, wall seconds (read_s, compute_s), process CPU
seconds (read_cpu_s, compute_cpu_s) and the peaks. Run with Debian's /usr/bin/python3
(numpy 1.24 / scipy 1.10).

usage: scipy_pipeline.py FILE [BLOCK] [PEAKS]
"""
import json
import sys
import time

import numpy as np
from scipy.io import wavfile
from scipy.signal import find_peaks, spectrogram


def main() -> None:
    path = sys.argv[1]
    block = int(sys.argv[2]) if len(sys.argv) > 2 else 65536
    max_peaks = int(sys.argv[3]) if len(sys.argv) > 3 else 10

    t0, c0 = time.perf_counter(), time.process_time()
    fs, x = wavfile.read(path)  # float WAV: float32 values as stored
    x = np.ascontiguousarray(x, dtype=np.float32)
    t1, c1 = time.perf_counter(), time.process_time()

    # Periodic Hann (get_window('hann') is the DFT-even form), mean removed per frame
    # (detrend='constant'), one-sided power spectrum in unit^2: the same spectrum the C++ path makes.
    f, _, sxx = spectrogram(x, fs=fs, window="hann", nperseg=block, noverlap=block // 2,
                            detrend="constant", scaling="spectrum", mode="psd")
    avg = sxx.mean(axis=1)
    # Peaks: 10 dB above a running median floor is what the C++ finder asks; find_peaks'
    # prominence against the median level is the nearest plain-scipy equivalent.
    floor = np.median(avg)
    idx, props = find_peaks(avg, height=floor * 10.0)
    order = np.argsort(props["peak_heights"])[::-1][:max_peaks]
    peaks = [[float(f[idx[i]]), float(np.sqrt(2.0 * avg[idx[i]]))] for i in order]
    t2, c2 = time.perf_counter(), time.process_time()

    print(json.dumps({"samples": int(x.size), "frames": int(sxx.shape[1]), "read_s": t1 - t0,
                      "compute_s": t2 - t1, "read_cpu_s": c1 - c0, "compute_cpu_s": c2 - c1,
                      "peaks": peaks}))


if __name__ == "__main__":
    main()
