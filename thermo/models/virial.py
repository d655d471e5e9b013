"""The truncated virial equation Z = 1 + B P / (R T), a volume-explicit model.

Pure and cross second virial coefficients from the Pitzer-type correlation
with Abbott's B0 and B1 (Smith, Van Ness and Abbott, Introduction to Chemical
Engineering Thermodynamics), and the usual combining rules for the cross
terms (Prausnitz): omega_ij = (omega_i + omega_j)/2, Tc_ij = sqrt(Tc_i Tc_j),
Zc_ij = (Zc_i + Zc_j)/2, Vc_ij = ((Vc_i^(1/3) + Vc_j^(1/3))/2)^3,
Pc_ij = Zc_ij R Tc_ij / Vc_ij. Mixture B = sum_ij y_i y_j B_ij.

The model is meant for gases at modest density. Smith, Van Ness and Abbott
(8th ed., Sec. 3.7 and its figure comparing the linear Z0 with Lee/Kesler)
state its range as where Z is still about linear in pressure: the two differ
by under 2 % above the figure's line, with no pressure limit beyond Tr ~ 3 and
a range that shrinks as Tr falls. ``truncation_error`` estimates that
departure from linearity from the third virial coefficient the equation
leaves out, so the range follows temperature as the book's line does;
``reduced_volume`` backs it up at half the critical density.
"""

from __future__ import annotations

import numpy as np

from ..components import R
from ..mixture import Mixture
from .base import GibbsTerms, VolumeExplicitModel

#: The equation serves where the third-virial term it leaves out would change
#: Z by less than this fraction: the 2 % by which Smith, Van Ness and Abbott
#: bound the linear Z0 against Lee/Kesler in the region they recommend.
MAX_TRUNCATION = 0.02
#: And at no more than half the critical density, V / Vc of at least 2
#: (common practice, no published source): a backstop where the third-virial
#: estimate alone is low because still higher terms have grown.
MIN_REDUCED_VOLUME = 2.0


def _orbey_vera(tr: np.ndarray, omega: np.ndarray) -> np.ndarray:
    """Reduced third virial coefficient C Pc^2 / (R Tc)^2 at reduced
    temperature ``tr``: Orbey and Vera, AIChE J. 29 (1983) 107 (coefficients
    from memory, checked in tests against reference equations)."""
    c0 = 0.01407 + 0.02432 / tr**2.8 - 0.00313 / tr**10.5
    c1 = -0.02676 + 0.01770 / tr**2.8 + 0.040 / tr**3 - 0.003 / tr**6 - 0.00228 / tr**10.5
    return c0 + omega * c1


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

    def third_virial(self, temperature: float, x: np.ndarray) -> float:
        """Mixture third virial coefficient C (m6/mol2) at ``temperature`` (K):
        Orbey and Vera's correlation on the cross parameters above, mixed by
        the usual rule C = sum_ijk y_i y_j y_k (C_ij C_jk C_ik)^(1/3)."""
        tr = temperature / self._tc_ij
        root = np.cbrt(self._scale_ij**2 * _orbey_vera(tr, self._omega_ij))
        return float(np.einsum("i,j,k,ij,jk,ik->", x, x, x, root, root, root))

    def truncation_error(self, temperature: float, pressure: float, x: np.ndarray) -> float:
        """Estimated fraction by which the left-out third-virial term,
        (C - B^2) (P / (R T))^2 in the pressure series of Z, would change the
        equation's Z at ``temperature`` (K) and ``pressure`` (Pa);
        dimensionless, infinite where the truncated Z is not positive."""
        b, _ = self.second_virial(temperature, x)
        c = self.third_virial(temperature, x)
        density = pressure / (R * temperature)  # mol/m3, ideal-gas
        z = 1.0 + b * density
        if z <= 0.0:
            return float("inf")
        return abs(c - b * b) * density**2 / z

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
