"""Inverse dynamics of a serial chain of revolute joints: τ = M(q)q̈ + C(q, q̇)q̇ + G(q).

The recursive Newton–Euler algorithm (Luh, Walker & Paul 1980; any robotics text), written in the world frame
and vectorised over samples: a forward pass carries angular velocity and acceleration and the linear
acceleration of each joint and centre of mass out along the chain (gravity enters as an upward acceleration of
the base), a backward pass sums the force and moment each link needs, and each joint's torque is the moment
about its axis. Samples are processed in chunks so that an hour at 1 kHz fits in memory.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

__all__ = [
    "Chain",
    "fix_joints",
    "forward_kinematics",
    "inverse_dynamics",
    "inverse_dynamics_rows",
    "rotation",
]

_CHUNK = 1 << 14

Array = NDArray[np.float64]


@dataclass(frozen=True, eq=False)
class Chain:
    """A serial chain: joint ``i`` moves link ``i``; frame ``i`` is frame ``i−1`` moved to the joint's origin
    and turned about its axis by ``q_i``; frame −1 is the fixed base (world: x forward, y left, z up).

    Attributes
    ----------
    names : tuple of str, length N
    origins : ndarray, shape (N, 3)
        Joint i's position in frame i−1, m.
    axes : ndarray, shape (N, 3)
        Joint i's unit axis in frame i−1 (and in frame i).
    masses : ndarray, shape (N,)
        Mass of link i, kg (zero for a massless link between co-located joints).
    coms : ndarray, shape (N, 3)
        Link i's centre of mass in frame i, m.
    inertias : ndarray, shape (N, 3, 3)
        Link i's inertia tensor about its centre of mass, in frame i, kg·m².
    gravity : ndarray, shape (3,)
        Gravitational acceleration in the world frame, m/s².
    """

    names: tuple[str, ...]
    origins: Array
    axes: Array
    masses: Array
    coms: Array
    inertias: Array
    gravity: Array

    @property
    def n(self) -> int:
        return len(self.names)


def fix_joints(chain: Chain, fixed: set[str]) -> Chain:
    """The same mechanism with the joints in ``fixed`` locked at zero: each fixed joint's link is merged into
    the nearest moving link before it (parallel-axis rule), or into the base when there is none.  Fewer
    joints, the same torques at the joints that remain."""
    names: list[str] = []
    origins: list[Array] = []
    axes: list[Array] = []
    bodies: list[list[tuple[float, Array, Array]]] = []
    offset = np.zeros(3)  # position of the current frame's origin in the last kept joint's frame
    for i, name in enumerate(chain.names):
        if name in fixed:
            offset = offset + chain.origins[i]
            if bodies:
                bodies[-1].append((chain.masses[i], offset + chain.coms[i], chain.inertias[i]))
            continue
        names.append(name)
        origins.append(offset + chain.origins[i])
        axes.append(chain.axes[i])
        bodies.append([(chain.masses[i], chain.coms[i], chain.inertias[i])])
        offset = np.zeros(3)
    masses, coms, inertias = [], [], []
    for parts in bodies:
        mass = sum(m for m, _, _ in parts)
        com = sum((m * c for m, c, _ in parts), np.zeros(3)) / mass if mass > 0 else np.zeros(3)
        inertia = np.zeros((3, 3))
        for m, c, inr in parts:
            d = c - com
            inertia += inr + m * (np.dot(d, d) * np.eye(3) - np.outer(d, d))
        masses.append(mass)
        coms.append(com)
        inertias.append(inertia)
    return Chain(
        tuple(names),
        np.array(origins).reshape(-1, 3),
        np.array(axes).reshape(-1, 3),
        np.array(masses),
        np.array(coms).reshape(-1, 3),
        np.array(inertias).reshape(-1, 3, 3),
        chain.gravity,
    )


def _skew(u: Array) -> Array:
    return np.array([[0.0, -u[2], u[1]], [u[2], 0.0, -u[0]], [-u[1], u[0], 0.0]])


def rotation(axis: Array, angle: Array) -> Array:
    """Rotation matrices about a fixed unit ``axis`` (3,) by ``angle`` (n,) rad (Rodrigues): shape (n, 3,
    3)."""
    k = _skew(np.asarray(axis, dtype=np.float64))
    a = np.asarray(angle, dtype=np.float64)
    s = np.sin(a)[:, None, None]
    c = (1.0 - np.cos(a))[:, None, None]
    return np.eye(3)[None] + s * k[None] + c * (k @ k)[None]


# The recursion below works on components: a vector is an array (3, n), a rotation (3, 3, n).  Products with
# the chain's constant vectors and matrices skip their zero entries, and cross products are written out, which
# is several times faster than np.cross / np.einsum on (n, 3) arrays.


def _comb(r: Array, v: Array) -> Array:
    """R·v for rotations R (3, 3, n) and one constant vector v (3,): (3, n)."""
    out = np.zeros(r.shape[1:])
    for k in range(3):
        if v[k] != 0.0:
            out += r[:, k] * v[k]
    return out


def _cols_times(r: Array, m: Array) -> Array:
    """R·M for rotations R (3, 3, n) and a constant matrix M (3, 3): (3, 3, n)."""
    out = np.zeros(r.shape)
    for j in range(3):
        for k in range(3):
            if m[k, j] != 0.0:
                out[:, j] += r[:, k] * m[k, j]
    return out


def _cross(a: Array, b: Array) -> Array:
    """a × b for vectors (3, n)."""
    return np.stack((a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]))


def _rot_t(r: Array, w: Array) -> Array:
    """Rᵀ·w for rotations (3, 3, n) and vectors (3, n)."""
    return np.stack(
        (
            r[0, 0] * w[0] + r[1, 0] * w[1] + r[2, 0] * w[2],
            r[0, 1] * w[0] + r[1, 1] * w[1] + r[2, 1] * w[2],
            r[0, 2] * w[0] + r[1, 2] * w[1] + r[2, 2] * w[2],
        )
    )


def _rot(r: Array, w: Array) -> Array:
    """R·w for rotations (3, 3, n) and vectors (3, n)."""
    return np.stack(
        (
            r[0, 0] * w[0] + r[0, 1] * w[1] + r[0, 2] * w[2],
            r[1, 0] * w[0] + r[1, 1] * w[1] + r[1, 2] * w[2],
            r[2, 0] * w[0] + r[2, 1] * w[1] + r[2, 2] * w[2],
        )
    )


def _inertia_times(r: Array, inertia: Array, w: Array) -> Array:
    """I_world·w = R·I·Rᵀ·w for body-frame inertia I (3, 3), without forming I_world: (3, n)."""
    local = _rot_t(r, w)
    scaled = np.zeros_like(local)
    for i in range(3):
        for k in range(3):
            if inertia[i, k] != 0.0:
                scaled[i] += inertia[i, k] * local[k]
    return _rot(r, scaled)


def _frames(chain: Chain, q: Array) -> tuple[list[Array], list[Array], list[Array]]:
    """World orientation R_i (3,3,n), origin p_i (3,n) and axis u_i (3,n) of every joint, for angles q (N,
    n)."""
    n = q.shape[1]
    r_prev = np.zeros((3, 3, n))
    for d in range(3):
        r_prev[d, d] = 1.0
    p_prev = np.zeros((3, n))
    rs, ps, us = [], [], []
    for i in range(chain.n):
        axis = chain.axes[i]
        k = _skew(axis)
        p = p_prev + _comb(r_prev, chain.origins[i])
        u = _comb(r_prev, axis)
        k2 = k @ k
        a = _cols_times(r_prev, k)  # R K
        b = _cols_times(r_prev, k2)  # R K²
        sin, vers = np.sin(q[i]), 1.0 - np.cos(q[i])
        r = r_prev.copy()  # R·(I + sin K + (1 − cos) K²), touching only the columns the rotation changes
        for j in range(3):
            if np.any(k[:, j] != 0.0) or np.any(k2[:, j] != 0.0):
                r[:, j] += sin * a[:, j] + vers * b[:, j]
        rs.append(r)
        ps.append(p)
        us.append(u)
        r_prev, p_prev = r, p
    return rs, ps, us


def forward_kinematics(chain: Chain, q: Array) -> tuple[Array, Array]:
    """Joint origins and link centres of mass in the world frame.

    Parameters
    ----------
    q : ndarray, shape (n, N)
        Joint angles, rad.

    Returns
    -------
    origins, coms : ndarray, shape (n, N, 3)
        m.
    """
    q = np.atleast_2d(np.asarray(q, dtype=np.float64))
    rs, ps, _ = _frames(chain, np.ascontiguousarray(q.T))
    origins = np.stack([p.T for p in ps], axis=1)
    coms = np.stack([(ps[i] + _comb(rs[i], chain.coms[i])).T for i in range(chain.n)], axis=1)
    return origins, coms


def inverse_dynamics(chain: Chain, q: Array, qd: Array, qdd: Array) -> Array:
    """Joint torques that produce the motion (q, q̇, q̈) against gravity.

    Parameters
    ----------
    q, qd, qdd : ndarray, shape (n, N)
        Angles (rad), angular velocities (rad/s) and accelerations (rad/s²) of the chain's joints.

    Returns
    -------
    ndarray, shape (n, N)
        Torque about each joint's axis, N·m, positive in the joint's positive direction.
    """
    q = np.atleast_2d(np.asarray(q, dtype=np.float64))
    qd = np.atleast_2d(np.asarray(qd, dtype=np.float64))
    qdd = np.atleast_2d(np.asarray(qdd, dtype=np.float64))
    return inverse_dynamics_rows(chain, q.T, qd.T, qdd.T).T


def inverse_dynamics_rows(chain: Chain, q: Array, qd: Array, qdd: Array) -> Array:
    """:func:`inverse_dynamics` for joint-major arrays: q, qd, qdd and the result of shape (N, n)."""
    out = np.empty(q.shape)
    for start in range(0, q.shape[1], _CHUNK):
        sl = slice(start, start + _CHUNK)
        out[:, sl] = _rnea(
            chain,
            np.ascontiguousarray(q[:, sl]),
            np.ascontiguousarray(qd[:, sl]),
            np.ascontiguousarray(qdd[:, sl]),
        )
    return out


def _rnea(chain: Chain, q: Array, qd: Array, qdd: Array) -> Array:
    """One chunk: q, qd, qdd of shape (N, n), torques (N, n)."""
    dof, n = q.shape
    rs, ps, us = _frames(chain, q)
    omega = np.zeros((3, n))
    alpha = np.zeros((3, n))
    acc = np.repeat(-chain.gravity[:, None], n, axis=1)  # base accelerates upward: gravity for every link
    p_prev = np.zeros((3, n))
    forces: list[Array | None] = []
    moments: list[Array | None] = []
    arms: list[Array | None] = []
    for i in range(dof):
        r = ps[i] - p_prev
        if np.any(chain.origins[i] != 0.0) or i == 0:
            acc = acc + _cross(alpha, r) + _cross(omega, _cross(omega, r))  # acceleration of joint i's origin
        spin = us[i] * qd[i]
        alpha = alpha + us[i] * qdd[i] + _cross(omega, spin)
        omega = omega + spin
        p_prev = ps[i]
        if chain.masses[i] == 0.0:
            forces.append(None)
            moments.append(None)
            arms.append(None)
            continue
        c = _comb(rs[i], chain.coms[i])  # centre of mass relative to the joint, world frame
        a_c = acc + _cross(alpha, c) + _cross(omega, _cross(omega, c))
        forces.append(chain.masses[i] * a_c)
        inertia = chain.inertias[i]
        moments.append(
            _inertia_times(rs[i], inertia, alpha) + _cross(omega, _inertia_times(rs[i], inertia, omega))
        )
        arms.append(c)
    tau = np.empty((dof, n))
    f_next = np.zeros((3, n))
    n_next = np.zeros((3, n))
    for i in range(dof - 1, -1, -1):
        n_i = n_next
        if i + 1 < dof and np.any(chain.origins[i + 1] != 0.0):
            n_i = n_i + _cross(ps[i + 1] - ps[i], f_next)
        force, moment, arm = forces[i], moments[i], arms[i]
        if force is not None and moment is not None and arm is not None:
            n_i = n_i + moment + _cross(arm, force)
            f_next = f_next + force
        n_next = n_i
        tau[i] = us[i][0] * n_i[0] + us[i][1] * n_i[1] + us[i][2] * n_i[2]
    return tau
