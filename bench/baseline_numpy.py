#!/usr/bin/python3
"""Baseline for `npm run bench`: the per-beam analysis the way a practitioner would
script it with numpy/scipy (Debian python3-numpy, python3-scipy): vectorised codes,
4x-oversampled 2-D FFT patterns, local-maximum search with a 3-point parabolic peak
fit. It reads a steercode scenario (rectangular lattice, az/el grid, Taylor taper,
calibration CSV) and writes one CSV row per beam.

usage: baseline_numpy.py scenario.json out.csv
"""
import csv
import json
import math
import os
import sys

import numpy as np
from scipy import ndimage
from scipy.signal import windows

C = 299792458.0


def qty(s, unit_scale):
    if isinstance(s, (int, float)):
        return float(s)
    v, u = s.split()
    return float(v) * unit_scale[u.lower()]


def main(path, out):
    sc = json.load(open(path))
    f = qty(sc["frequency"], {"ghz": 1e9, "mhz": 1e6, "hz": 1.0})
    lam = C / f
    lat = sc["array"]["lattice"]
    M, N = lat["columns"], lat["rows"]
    def length(s):
        if isinstance(s, str) and s.endswith("lambda"):
            return float(s.split()[0]) * lam
        return qty(s, {"mm": 1e-3, "m": 1.0, "cm": 1e-2})
    dx, dy = length(lat["dx"]), length(lat["dy"])
    x = (np.arange(M) - (M - 1) / 2) * dx
    y = (np.arange(N) - (N - 1) / 2) * dy
    X, Y = np.meshgrid(x, y)  # rows = y, columns = x
    t = sc["taper"]
    sll = -float(t["sidelobe"].split()[0])
    a = np.outer(windows.taylor(N, nbar=t["nbar"], sll=sll), windows.taylor(M, nbar=t["nbar"], sll=sll))
    a /= a.max()
    with open(os.path.join(os.path.dirname(path), sc["calibration"])) as fh:
        rows_ = list(csv.DictReader(line for line in fh if not line.startswith("#")))
    rows_.sort(key=lambda r: int(r["element"]))
    cph = np.deg2rad(np.array([float(r["phase_offset_deg"]) for r in rows_])).reshape(N, M)
    cg = np.array([float(r["gain_offset_db"]) for r in rows_]).reshape(N, M)
    B = sc["phaseShifter"]["bits"]
    lsb = 2 * np.pi / 2**B
    step = float(sc["attenuator"]["step"].split()[0])
    amax = 2 ** sc["attenuator"]["bits"] - 1
    gref = np.min(cg - 20 * np.log10(a))
    A = cg - gref - 20 * np.log10(a)
    q = np.clip(np.floor(A / step + 0.5), 0, amax)
    k = 2 * np.pi / lam
    g = sc["beams"]
    az = np.arange(g["az"]["from"], g["az"]["to"] + 1e-9, g["az"]["step"])
    el = np.arange(g["el"]["from"], g["el"]["to"] + 1e-9, g["el"]["step"])
    P = 4
    NX, NY = 2 ** int(np.ceil(np.log2(P * M))), 2 ** int(np.ceil(np.log2(P * N)))
    us = np.fft.fftshift(np.fft.fftfreq(NX)) * lam / dx
    vs = np.fft.fftshift(np.fft.fftfreq(NY)) * lam / dy
    UU, VV = np.meshgrid(us, vs)
    vis = UU**2 + VV**2 <= 1
    ideal_amp = 10 ** (gref / 20) * a
    real_amp = 10 ** ((cg - q * step) / 20)
    rows = []

    def pattern(w):
        F = np.fft.fftshift(np.fft.ifft2(w, s=(NY, NX))) * NX * NY
        return np.abs(F) ** 2

    def analyse(p, u0, v0):
        lm = (p == ndimage.maximum_filter(p, size=3, mode="wrap")) & vis
        iy, ix = np.nonzero(lm)
        d = (us[ix] - u0) ** 2 + (vs[iy] - v0) ** 2
        m = np.argmin(d)
        py, px = iy[m], ix[m]
        # 3-point parabolic refinement of the peak on each axis
        def para(l, c, r):
            den = l - 2 * c + r
            return 0.0 if den == 0 else 0.5 * (l - r) / den
        pl = np.log(p[py, (px - 1) % NX] + 1e-300), np.log(p[py, px]), np.log(p[py, (px + 1) % NX] + 1e-300)
        ql = np.log(p[(py - 1) % NY, px] + 1e-300), np.log(p[py, px]), np.log(p[(py + 1) % NY, px] + 1e-300)
        pu = us[px] + para(*pl) * (us[1] - us[0])
        pv = vs[py] + para(*ql) * (vs[1] - vs[0])
        others = np.delete(p[iy, ix], m)
        psl = 10 * np.log10(others.max() / p[py, px]) if others.size else np.nan
        return pu, pv, psl

    for e in el:
        for z in az:
            u0 = math.cos(math.radians(e)) * math.sin(math.radians(z))
            v0 = math.sin(math.radians(e))
            phi = -k * (X * u0 + Y * v0)
            code = np.mod(np.floor((np.mod(phi - cph, 2 * np.pi)) / lsb + 0.5), 2**B)
            wi = ideal_amp * np.exp(1j * phi)
            wr = real_amp * np.exp(1j * (cph + code * lsb))
            pi_, pr = pattern(wi), pattern(wr)
            _, _, psl_i = analyse(pi_, u0, v0)
            pu, pv, psl_r = analyse(pr, u0, v0)
            w0 = math.sqrt(max(0.0, 1 - u0 * u0 - v0 * v0))
            pw = math.sqrt(max(0.0, 1 - pu * pu - pv * pv))
            point = math.degrees(math.acos(min(1.0, u0 * pu + v0 * pv + w0 * pw)))
            steer = np.exp(-1j * phi)  # evaluate both at the commanded direction
            gl = -10 * np.log10(abs((wr * steer).sum()) ** 2 / abs((wi * steer).sum()) ** 2)
            err = np.angle(wr / wi)
            rows.append([z, e, pu, pv, point, psl_i, psl_r, psl_r - psl_i, gl, np.degrees(np.sqrt(np.mean(err**2))), np.sqrt(np.mean((20 * np.log10(np.abs(wr) / np.abs(wi))) ** 2))])
    with open(out, "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["az_deg", "el_deg", "peak_u", "peak_v", "pointing_error_deg", "psl_ideal_db", "psl_db", "sll_rise_db", "gain_loss_db", "rms_phase_error_deg", "rms_amp_error_db"])
        w.writerows(rows)


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
