"""Derivatives of logged channels: speed from position, acceleration from speed or position.

When a joint logs no velocity channel its speed is derived from position with a Savitzky–Golay derivative
(Savitzky & Golay 1964, Anal. Chem. 36:1627): at every sample a polynomial of order ``polyorder`` (default 2)
is fitted by least squares to the ``w`` samples of a window centred on it, and the fit's derivative at the
centre is the estimate.  For a quadratic over 5 samples this is the published filter
``(-2, -1, 0, 1, 2) / (10 Δt)``.

Properties stated in every finding that uses a derived speed:

* the window: ``w`` samples, the protocol's ``audit.derivative_window`` rounded to the nearest odd number of
  sample periods (at least ``polyorder + 1``, and odd so that it is centred);
* its delay: a centred window has **no phase delay** (0 s);
* its edges: the first and last ``w // 2`` samples of the log have no centred window; they take the derivative
  of the polynomial fitted to the first (last) full window, evaluated at their own position (scipy's
  ``mode="interp"``);
* its validity: a derived sample is valid only when every sample of the window it used is valid and the
  window's time span is within 25 % of ``(w - 1)`` sample periods; a gap or an invalid sample therefore makes
  the ``w // 2`` samples either side of it invalid too (not analysed, never "within limits").

The filter assumes a uniform clock; the sample period is the median step of the log's time.  scipy.signal is
imported inside the function that needs it (it costs about 1.4 s to import).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Derivative", "sample_period", "savgol_derivative", "window_length"]

#: A window whose time span is further than this fraction from nominal spans a gap or a clock glitch.
_SPAN_TOLERANCE = 0.25


@dataclass(frozen=True, eq=False)
class Derivative:
    """A derived channel and how it was derived.

    Attributes
    ----------
    t : ndarray, shape (n,)
        Sample times, s (the source channel's clock, shared, not copied).
    x : ndarray, shape (n,), float64
        The derivative, in the source unit per second (``deriv`` times).
    valid : ndarray of bool, shape (n,)
        Samples whose whole window was valid (see the module docstring).
    deriv : int
        Order of the derivative (1: speed from position; 2: acceleration from position).
    polyorder : int
        Order of the fitted polynomial.
    window_samples : int
        ``w``, odd.
    sample_period : float
        Δt used, s.
    """

    t: np.ndarray
    x: np.ndarray
    valid: np.ndarray
    deriv: int
    polyorder: int
    window_samples: int
    sample_period: float

    @property
    def window_s(self) -> float:
        """The window's length in time, ``w · Δt``, s."""
        return self.window_samples * self.sample_period

    @property
    def delay_s(self) -> float:
        """Phase delay of the estimate, s: 0 for a centred window."""
        return 0.0

    @property
    def edge_samples(self) -> int:
        """Samples at each end of the log that use the fit of the first / last full window."""
        return self.window_samples // 2

    def describe(self) -> str:
        """One sentence for findings and the summary."""
        what = "speed" if self.deriv == 1 else "acceleration"
        rate = 1.0 / self.sample_period if self.sample_period > 0 else float("nan")
        return (
            f"{what} derived by a Savitzky–Golay derivative (polynomial order {self.polyorder}) over a "
            f"centred window of {self.window_samples} samples ({self.window_s * 1e3:.4g} ms at "
            f"{rate:.5g} Hz): no phase delay (0 s); the first and last {self.edge_samples} samples use the "
            "fit of the first/last full window"
        )


#: Above this many samples the median step is taken over this many evenly spread steps (a faithful estimate of
#: the median at a fraction of the cost of sorting an hour of 1 kHz steps).
_MEDIAN_STEPS = 200_000


def sample_period(t: np.ndarray) -> float:
    """The median positive step of a time vector, s (NaN with fewer than two samples or no positive step).

    For long logs the median is taken over ``_MEDIAN_STEPS`` evenly spread steps.
    """
    n = t.shape[0]
    if n < 2:
        return float("nan")
    if n - 1 > _MEDIAN_STEPS:
        at = np.linspace(0, n - 2, _MEDIAN_STEPS).astype(np.int64)
        steps = t[at + 1] - t[at]
    else:
        steps = np.diff(t)
    steps = steps[steps > 0]
    if steps.shape[0] == 0:
        return float("nan")
    return float(np.median(steps))


def window_length(window: float, dt: float, polyorder: int = 2) -> int:
    """Number of samples of a centred window of ``window`` seconds at sample period ``dt``.

    The nearest odd integer to ``window / dt``, and at least the smallest odd number above ``polyorder``.
    """
    n = round(window / dt) if dt > 0 and np.isfinite(dt) else 0
    if n % 2 == 0:
        n += 1
    smallest = polyorder + 1 if polyorder % 2 == 0 else polyorder + 2
    return max(n, smallest)


def savgol_derivative(
    t: np.ndarray,
    x: np.ndarray,
    valid: np.ndarray,
    window: float,
    *,
    deriv: int = 1,
    polyorder: int = 2,
) -> Derivative:
    """Savitzky–Golay derivative of ``x`` over a centred window of about ``window`` seconds.

    Parameters
    ----------
    t : ndarray, shape (n,), float64
        Sample times, s.
    x : ndarray, shape (n,), float64
        Values (internal unit, e.g. rad).  Invalid samples may hold anything, NaN included.
    valid : ndarray of bool, shape (n,)
        Samples fit to use.
    window : float
        Window length, s (``audit.derivative_window``).
    deriv : int
        1 for the first derivative, 2 for the second.
    polyorder : int
        Polynomial order, >= ``deriv``.

    Returns
    -------
    Derivative
        ``x`` in unit/s (unit/s² for ``deriv=2``); all samples invalid when the log is shorter than the window
        or has no usable clock.
    """
    if polyorder < deriv:
        raise ValueError(f"polyorder ({polyorder}) must be at least deriv ({deriv})")
    n = x.shape[0]
    dt = sample_period(t)
    w = window_length(window, dt, polyorder)
    if n < w or not np.isfinite(dt):
        return Derivative(
            t,
            np.full(n, np.nan),
            np.zeros(n, dtype=bool),
            deriv,
            polyorder,
            w,
            dt if np.isfinite(dt) else 0.0,
        )

    from scipy.signal import savgol_filter  # lazy: ~1.4 s to import

    all_valid = bool(valid.all())
    src = x if all_valid else np.where(valid, x, 0.0)
    d = savgol_filter(src, w, polyorder, deriv=deriv, delta=dt, mode="interp")

    # Windows [lo, lo + w) for lo = 0 .. n - w; sample i uses lo = clip(i - w // 2, 0, n - w): centred except
    # within w // 2 of either end, where the first / last window is used.
    nominal = (w - 1) * dt
    span = t[w - 1 :] - t[: n - w + 1]
    span -= nominal
    np.abs(span, out=span)
    good = span <= _SPAN_TOLERANCE * nominal
    if not all_valid:
        bad = np.zeros(n + 1, dtype=np.int64)
        np.cumsum(~valid, out=bad[1:])
        good &= bad[w:] == bad[: n - w + 1]
    h = w // 2
    ok = np.empty(n, dtype=bool)
    ok[h : n - h] = good
    ok[:h] = good[0]
    ok[n - h :] = good[-1]
    if not ok.all():
        d[~ok] = np.nan
    return Derivative(t, d, ok, deriv, polyorder, w, dt)
