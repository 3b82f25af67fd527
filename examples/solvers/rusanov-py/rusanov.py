"""rusanov: an example outside solver for fvsweep, in Python with NumPy.

2-D Euler (ideal gas) or Burgers, first-order Godunov-type finite volumes
with the Rusanov (local Lax-Friedrichs) flux (Rusanov 1961), dimension-split
with Lie splitting X(dt) Y(dt). First order in space and time.

Usage: python3 rusanov.py JOB.json INPUT.npy OUTPUT.npy CFL

It reads the grid, domain, boundaries, gamma and t_end from the job file,
the initial cell averages from INPUT (shape (ny, nx, nvars), the variables
in the order the job file's "variables" lists), and writes the final
averages to OUTPUT in the same layout.
"""
import json
import sys

import numpy as np


def primitive_to_conserved(w, gamma):
    rho, u, v, p = w
    return np.array([rho, rho * u, rho * v, p / (gamma - 1) + 0.5 * rho * (u * u + v * v)])


def conserved_to_primitive(q, gamma):
    rho, mx, my, e = q
    u, v = mx / rho, my / rho
    return np.array([rho, u, v, (gamma - 1) * (e - 0.5 * rho * (u * u + v * v))])


def pad(q, lo, hi, normal):
    """One ghost cell each side of axis 1 (q has shape (nvars, lines, n))."""
    left = q[:, :, -1:] if lo == "periodic" else q[:, :, :1].copy()
    right = q[:, :, :1] if hi == "periodic" else q[:, :, -1:].copy()
    if lo == "reflective" and normal is not None:
        left[normal] *= -1
    if hi == "reflective" and normal is not None:
        right[normal] *= -1
    return np.concatenate([left, q, right], axis=2)


def euler_flux(q, gamma, n, t):
    """Flux along the normal (momentum index n, tangential t) and max speed."""
    rho, e = q[0], q[3]
    un, ut = q[n] / rho, q[t] / rho
    p = (gamma - 1) * (e - 0.5 * rho * (un * un + ut * ut))
    f = np.empty_like(q)
    f[0] = q[n]
    f[n] = q[n] * un + p
    f[t] = q[n] * ut
    f[3] = (e + p) * un
    return f, np.abs(un) + np.sqrt(gamma * p / rho)


def sweep(q, dt, h, lo, hi, euler, gamma, n, t):
    """One first-order sweep along the last axis of q, in place."""
    g = pad(q, lo, hi, n if euler else None)
    if euler:
        f, s = euler_flux(g, gamma, n, t)
    else:
        f, s = 0.5 * g * g, np.abs(g[0])
    a = np.maximum(s[:, :-1], s[:, 1:])
    face = 0.5 * (f[:, :, :-1] + f[:, :, 1:]) - 0.5 * a * (g[:, :, 1:] - g[:, :, :-1])
    q -= dt / h * (face[:, :, 1:] - face[:, :, :-1])


def main():
    job_path, in_path, out_path, cfl = sys.argv[1], sys.argv[2], sys.argv[3], float(sys.argv[4])
    with open(job_path) as f:
        job = json.load(f)
    euler = job["equation"] == "euler"
    gamma = job.get("gamma", 0.0)
    names = job["variables"]
    dx, dy, t_end = job["dx"], job["dy"], job["t_end"]
    bc = job["boundary"]
    a = np.load(in_path)  # (ny, nx, nvars)
    cols = {name: a[:, :, k] for k, name in enumerate(names)}
    if euler and "p" in cols:
        q = primitive_to_conserved([cols[k] for k in ("rho", "u", "v", "p")], gamma)
    elif euler:
        q = np.array([cols[k] for k in ("rho", "mx", "my", "E")])
    else:
        q = np.array([cols["u"]])
    # q has shape (nvars, ny, nx): x sweeps run along the last axis as is;
    # y sweeps on the transposed view (nvars, nx, ny).
    t = 0.0
    while t < t_end:
        if euler:
            w = conserved_to_primitive(q, gamma)
            c = np.sqrt(gamma * w[3] / w[0])
            rate = max(np.max((np.abs(w[1]) + c) / dx), np.max((np.abs(w[2]) + c) / dy))
        else:
            rate = np.max(np.abs(q[0])) * max(1 / dx, 1 / dy)
        dt = min(cfl / rate, t_end - t) if rate > 0 else t_end - t
        sweep(q, dt, dx, bc["west"], bc["east"], euler, gamma, 1, 2)
        qt = q.transpose(0, 2, 1).copy()
        sweep(qt, dt, dy, bc["south"], bc["north"], euler, gamma, 2, 1)
        q[:] = qt.transpose(0, 2, 1)
        t += dt
    if euler:
        w = conserved_to_primitive(q, gamma)
        out = {"rho": q[0], "mx": q[1], "my": q[2], "E": q[3], "u": w[1], "v": w[2], "p": w[3]}
    else:
        out = {"u": q[0]}
    ny, nx = q.shape[1], q.shape[2]
    x = job["x0"] + (np.arange(nx) + 0.5) * dx
    y = job["y0"] + (np.arange(ny) + 0.5) * dy
    out["x"], out["y"] = np.meshgrid(x, y)
    np.save(out_path, np.stack([out[name] for name in names], axis=-1).astype(np.float64))


if __name__ == "__main__":
    main()
