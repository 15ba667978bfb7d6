"""The soft tissue between a cuff and the limb: a linear spring–damper.

The force across the tissue is F = k·δ + c·δ̇, with δ the interaction displacement (how far the cuff has moved
into the limb) and δ̇ its rate.  The stiffness k and the effective mass m_H of each body region are those of
ISO/TS 15066:2016 Annex A Table A.3 (limits/iso_ts_15066_body_model.csv); the damping is set by a damping
ratio, c = 2ζ√(k·m_H).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["Tissue", "tissue_for_region"]


@dataclass(frozen=True, slots=True)
class Tissue:
    """Spring–damper of one contact.

    Attributes
    ----------
    stiffness : float
        k, N/m.
    damping : float
        c, N·s/m.
    source : str
        Where k came from.
    """

    stiffness: float
    damping: float
    source: str

    def force(self, delta: ArrayLike, delta_rate: ArrayLike) -> NDArray[np.float64]:
        """F = k·δ + c·δ̇ (N) for displacement δ (m) and its rate δ̇ (m/s), elementwise."""
        return self.stiffness * np.asarray(delta, dtype=np.float64) + self.damping * np.asarray(
            delta_rate, dtype=np.float64
        )

    def displacement_for(self, force: float) -> float:
        """The static displacement that carries ``force``: δ = F/k (m)."""
        return force / self.stiffness


def tissue_for_region(region: str, damping_ratio: float) -> Tissue:
    """The spring–damper of an ISO/TS 15066 body region (k and m_H from Table A.3)."""
    from bracer.reference import body_model

    rows = body_model()
    if region not in rows:
        raise KeyError(f"body region '{region}' has no row in the ISO/TS 15066 body model table")
    row = rows[region]
    k = row.k_n_per_mm * 1e3
    c = 2.0 * damping_ratio * math.sqrt(k * row.m_h_kg)
    return Tissue(
        k, c, f"{row.source} ({row.confidence}): k = {row.k_n_per_mm:g} N/mm, m_H = {row.m_h_kg:g} kg"
    )
