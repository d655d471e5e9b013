"""The truncated virial equation Z = 1 + B P / (R T), a volume-explicit model.

Pure and cross second virial coefficients from the Pitzer-type correlation
with Abbott's B0 and B1 (Smith, Van Ness and Abbott, Introduction to Chemical
Engineering Thermodynamics), and the usual combining rules for the cross
terms (Prausnitz): omega_ij = (omega_i + omega_j)/2, Tc_ij = sqrt(Tc_i Tc_j),
Zc_ij = (Zc_i + Zc_j)/2, Vc_ij = ((Vc_i^(1/3) + Vc_j^(1/3))/2)^3,
Pc_ij = Zc_ij R Tc_ij / Vc_ij. Mixture B = sum_ij y_i y_j B_ij.

The model is meant for gases at modest density; ``reduced_volume`` lets a
caution tell when it is being asked to serve outside that.
"""

from __future__ import annotations

import numpy as np

from ..components import R
from ..mixture import Mixture
from .base import GibbsTerms, VolumeExplicitModel

# The correlation serves where the reduced volume V / Vc is at least about 2
# (Smith, Van Ness and Abbott's guide for the generalized virial correlation).
MIN_REDUCED_VOLUME = 2.0


class VirialModel(VolumeExplicitModel):
    """Second-virial (truncated) equation of state over a Mixture, SI units."""

    name = "virial"

    def __init__(self, mixture: Mixture):
        self.mixture = mixture
        tc = mixture.critical_temperature
        omega = mixture.acentric_factor
        zc = mixture.critical_compressibility
        vc = mixture.critical_volume
        self._tc_ij = np.sqrt(np.outer(tc, tc))
        self._omega_ij = (omega[:, None] + omega[None, :]) / 2.0
        zc_ij = (zc[:, None] + zc[None, :]) / 2.0
        vc_ij = ((np.cbrt(vc)[:, None] + np.cbrt(vc)[None, :]) / 2.0) ** 3
        self._vc_ij = vc_ij
        pc_ij = zc_ij * R * self._tc_ij / vc_ij
        self._scale_ij = R * self._tc_ij / pc_ij  # m3/mol

    def cross_coefficients(self, temperature: float) -> tuple[np.ndarray, np.ndarray]:
        """Matrices B_ij (m3/mol) and dB_ij/dT (m3/(mol K)) at ``temperature`` (K)."""
        tr = temperature / self._tc_ij
        b0 = 0.083 - 0.422 / tr**1.6
        b1 = 0.139 - 0.172 / tr**4.2
        db0 = 0.6752 / tr**2.6
        db1 = 0.7224 / tr**5.2
        b_ij = self._scale_ij * (b0 + self._omega_ij * b1)
        db_ij = self._scale_ij * (db0 + self._omega_ij * db1) / self._tc_ij
        return b_ij, db_ij

    def second_virial(self, temperature: float, x: np.ndarray) -> tuple[float, float]:
        """Mixture B (m3/mol) and dB/dT (m3/(mol K)) at ``temperature`` (K)."""
        b_ij, db_ij = self.cross_coefficients(temperature)
        return float(x @ b_ij @ x), float(x @ db_ij @ x)

    def gibbs(self, temperature: float, pressure: float, x: np.ndarray) -> GibbsTerms:
        b_ij, db_ij = self.cross_coefficients(temperature)
        row = b_ij @ x
        b = float(x @ row)
        db = float(x @ db_ij @ x)
        rt = R * temperature
        return GibbsTerms(
            g=b * pressure / rt,
            g_T=pressure / R * (db / temperature - b / temperature**2),
            g_P=b / rt,
            g_n=(2.0 * row - b) * pressure / rt,
        )

    def reduced_volume(self, temperature: float, pressure: float, x: np.ndarray) -> float:
        """Molar volume over the mixture's pseudo-critical volume (Kay's rule), dimensionless."""
        b, _ = self.second_virial(temperature, x)
        volume = R * temperature / pressure + b
        return volume / float(x @ self._vc_ij @ x)

    def batch_gibbs(self, temperatures: np.ndarray, pressures: np.ndarray, x: np.ndarray):
        """Arrays g, g_T (1/K), g_P (1/Pa) for arrays of T (K) and P (Pa), one composition."""
        t = np.asarray(temperatures, dtype=float)[:, None, None]
        tr = t / self._tc_ij
        b_ij = self._scale_ij * (0.083 - 0.422 / tr**1.6 + self._omega_ij * (0.139 - 0.172 / tr**4.2))
        db_ij = self._scale_ij * (0.6752 / tr**2.6 + self._omega_ij * 0.7224 / tr**5.2) / self._tc_ij
        b = np.einsum("i,nij,j->n", x, b_ij, x)
        db = np.einsum("i,nij,j->n", x, db_ij, x)
        t = t[:, 0, 0]
        p = np.asarray(pressures, dtype=float)
        return b * p / (R * t), p / R * (db / t - b / t**2), b / (R * t)


def virial(mixture: Mixture) -> VirialModel:
    """Truncated virial equation with Pitzer-Abbott B over ``mixture``."""
    return VirialModel(mixture)
