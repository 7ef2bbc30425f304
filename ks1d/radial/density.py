"""Spherical densities, gradients and kinetic-energy densities from radial orbitals.

For a sub-shell n l holding f_σ electrons of spin σ, spread evenly over its
2l+1 m-sublevels, with u = rR:

    ρ_σ(r)  = Σ f_σ u² / (4π r²)
    ρ′_σ(r) = Σ f_σ (2 u u′ r − 2 u²) / (4π r³)
    τ_σ(r)  = ½ Σ f_σ [R′² + l(l+1) R²/r²] / (4π),  R = u/r

(τ uses Σ_m |∇(R Y_lm)|² = (2l+1)/(4π) [R′² + l(l+1)R²/r²], Unsöld's theorem
for the angular part).
"""
from __future__ import annotations

import numpy as np

FOUR_PI = 4.0 * np.pi


def shell_density(r: np.ndarray, u: np.ndarray, occupation: float) -> np.ndarray:
    """ρ contribution f u²/(4π r²) of one sub-shell."""
    return occupation * u * u / (FOUR_PI * r * r)


def shell_density_derivative(r: np.ndarray, u: np.ndarray, du: np.ndarray, occupation: float) -> np.ndarray:
    """dρ/dr contribution f (2 u u′ r − 2 u²)/(4π r³) of one sub-shell."""
    return occupation * (2.0 * u * du * r - 2.0 * u * u) / (FOUR_PI * r**3)


def shell_tau(r: np.ndarray, u: np.ndarray, du: np.ndarray, l: int, occupation: float) -> np.ndarray:
    """τ contribution ½ f [R′² + l(l+1) R²/r²]/(4π) of one sub-shell, R = u/r."""
    R = u / r
    dR = du / r - u / (r * r)
    return 0.5 * occupation * (dR * dR + l * (l + 1) * R * R / (r * r)) / FOUR_PI
