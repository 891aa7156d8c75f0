#!/usr/bin/python3
"""Baseline for `npm run bench`: the per-beam analysis the way a careful practitioner
would script it for speed with numpy (Debian python3-numpy): vectorised codes, beams
processed in batches (one stacked 2-D FFT per batch), 4x-oversampled patterns, 8-neighbour
local-maximum search inside visible space, a 3-point parabolic fit of the main-lobe peak.
numpy only: the Taylor window is computed from its formula exactly as
scipy.signal.windows.taylor(norm=True) does (bench/run.js checks the two agree, outside
the timing), because importing scipy.signal alone costs ~0.8 s on Debian's scipy 1.17
and a script tuned for speed would avoid it.

It reads a steercode scenario (rectangular lattice, az/el or u-v grid, Taylor taper,
calibration CSV) and writes one CSV row per beam.

usage: baseline_numpy.py scenario.json out.csv
       baseline_numpy.py --taylor M NBAR SLL   (prints the window, for the agreement check)
"""
import csv
import json
import math
import os
import sys

import numpy as np

C = 299792458.0


def taylor(M, nbar, sll):
    """Taylor window (Taylor 1955), normalised to 1 at the centre; the same arithmetic as
    scipy.signal.windows.taylor(M, nbar, sll, norm=True, sym=True)."""
    B = 10 ** (sll / 20)
    A = np.arccosh(B) / np.pi
    s2 = nbar**2 / (A**2 + (nbar - 0.5) ** 2)
    ma = np.arange(1, nbar, dtype=np.float64)
    signs = np.empty_like(ma)
    signs[::2] = 1
    signs[1::2] = -1
    m2 = ma * ma
    Fm = np.empty(nbar - 1)
    for mi in range(nbar - 1):
        numer = signs[mi] * np.prod(1 - m2[mi] / s2 / (A**2 + (ma - 0.5) ** 2))
        denom = 2 * np.prod(1 - m2[mi] / m2[:mi]) * np.prod(1 - m2[mi] / m2[mi + 1:])
        Fm[mi] = numer / denom

    def W(n):
        return 1 + 2 * np.matmul(Fm, np.cos(2 * np.pi * ma[:, np.newaxis] * (n - M / 2.0 + 0.5) / M))

    return W(np.arange(M, dtype=np.float64)) / W((M - 1) / 2)


def qty(s, unit_scale):
    if isinstance(s, (int, float)):
        return float(s)
    v, u = s.split()
    return float(v) * unit_scale[u.lower()]


def grid_axis(g):
    n = int(round((g["to"] - g["from"]) / g["step"])) + 1
    return g["from"] + np.arange(n) * g["step"]


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
    a = np.outer(taylor(N, t["nbar"], sll), taylor(M, t["nbar"], sll))
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
    if g["kind"] == "azel":
        az, el = grid_axis(g["az"]), grid_axis(g["el"])
        EL, AZ = np.meshgrid(np.radians(el), np.radians(az), indexing="ij")  # el outer, az inner
        U0 = (np.cos(EL) * np.sin(AZ)).ravel()
        V0 = np.sin(EL).ravel()
        labels = np.stack([np.degrees(AZ).ravel(), np.degrees(EL).ravel()], axis=1)
    else:
        uu, vv = grid_axis(g["u"]), grid_axis(g["v"])
        VV0, UU0 = np.meshgrid(vv, uu, indexing="ij")  # v outer, u inner
        U0, V0 = UU0.ravel(), VV0.ravel()
        labels = np.stack([U0, V0], axis=1)
    nb = U0.size
    P = 4
    NX, NY = 2 ** int(np.ceil(np.log2(P * M))), 2 ** int(np.ceil(np.log2(P * N)))
    us = np.fft.fftshift(np.fft.fftfreq(NX)) * lam / dx
    vs = np.fft.fftshift(np.fft.fftfreq(NY)) * lam / dy
    du, dv = us[1] - us[0], vs[1] - vs[0]
    UU, VV = np.meshgrid(us, vs)
    vis = UU**2 + VV**2 <= 1
    ideal_amp = 10 ** (gref / 20) * a
    real_amp = 10 ** ((cg - q * step) / 20)
    out_rows = np.empty((nb, 11))
    out_rows[:, 0:2] = labels
    K = int(max(1, min(64, (1 << 21) // (NX * NY))))  # beams per batch: ~32 MiB of complex patterns

    def patterns(w):
        F = np.fft.fftshift(np.fft.ifft2(w, s=(NY, NX)), axes=(-2, -1))
        return (F.real**2 + F.imag**2) * float(NX * NY) ** 2

    def local_max(p):
        m = np.broadcast_to(vis, p.shape).copy()
        for sy in (-1, 0, 1):
            for sx in (-1, 0, 1):
                if sy or sx:
                    m &= p >= np.roll(p, (sy, sx), axis=(-2, -1))
        return m

    def analyse(p, lm, u0, v0):
        iy, ix = np.nonzero(lm)
        d = (us[ix] - u0) ** 2 + (vs[iy] - v0) ** 2
        m = np.argmin(d)
        py, px = iy[m], ix[m]
        c = np.log(p[py, px])

        def para(l, r):
            den = l - 2 * c + r
            return 0.0 if den == 0 else 0.5 * (l - r) / den

        pu = us[px] + para(np.log(p[py, (px - 1) % NX] + 1e-300), np.log(p[py, (px + 1) % NX] + 1e-300)) * du
        pv = vs[py] + para(np.log(p[(py - 1) % NY, px] + 1e-300), np.log(p[(py + 1) % NY, px] + 1e-300)) * dv
        vals = p[iy, ix]
        vals[m] = 0
        psl = 10 * np.log10(vals.max() / p[py, px]) if vals.size > 1 else np.nan
        return pu, pv, psl

    for s in range(0, nb, K):
        u0, v0 = U0[s:s + K], V0[s:s + K]
        phi = -k * (X[np.newaxis] * u0[:, None, None] + Y[np.newaxis] * v0[:, None, None])
        code = np.mod(np.floor(np.mod(phi - cph, 2 * np.pi) / lsb + 0.5), 2**B)
        wi = ideal_amp * np.exp(1j * phi)
        wr = real_amp * np.exp(1j * (cph + code * lsb))
        pi_, pr = patterns(wi), patterns(wr)
        lmi, lmr = local_max(pi_), local_max(pr)
        steer = np.exp(-1j * phi)  # evaluate both at the commanded direction
        gl = -10 * np.log10(np.abs((wr * steer).sum(axis=(1, 2))) ** 2 / np.abs((wi * steer).sum(axis=(1, 2))) ** 2)
        err = np.angle(wr / wi)
        rms_ph = np.degrees(np.sqrt(np.mean(err**2, axis=(1, 2))))
        rms_amp = np.sqrt(np.mean((20 * np.log10(np.abs(wr) / np.abs(wi))) ** 2, axis=(1, 2)))
        for j in range(u0.size):
            _, _, psl_i = analyse(pi_[j], lmi[j], u0[j], v0[j])
            pu, pv, psl_r = analyse(pr[j], lmr[j], u0[j], v0[j])
            w0 = math.sqrt(max(0.0, 1 - u0[j] ** 2 - v0[j] ** 2))
            pw = math.sqrt(max(0.0, 1 - pu * pu - pv * pv))
            point = math.degrees(math.acos(min(1.0, u0[j] * pu + v0[j] * pv + w0 * pw)))
            out_rows[s + j, 2:] = [pu, pv, point, psl_i, psl_r, psl_r - psl_i, gl[j], rms_ph[j], rms_amp[j]]
    with open(out, "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["az_deg" if g["kind"] == "azel" else "u", "el_deg" if g["kind"] == "azel" else "v", "peak_u", "peak_v", "pointing_error_deg", "psl_ideal_db", "psl_db", "sll_rise_db", "gain_loss_db", "rms_phase_error_deg", "rms_amp_error_db"])
        w.writerows(out_rows.tolist())


if __name__ == "__main__":
    if sys.argv[1] == "--taylor":
        print(json.dumps(taylor(int(sys.argv[2]), int(sys.argv[3]), float(sys.argv[4])).tolist()))
    else:
        main(sys.argv[1], sys.argv[2])
