"""Fixture compensation (open, short, load) and port extension.

A bench measurement is never of the part alone: leads, clips and the test
board sit between the analyser's calibrated plane and the part.  Seen from
the analyser, the fixture is a linear two-port terminated by the part, so
the measured impedance is a bilinear (Moebius) function of the part's::

    Z_m = (A Z + B) / (C Z + D)          (ABCD matrix of the fixture)

Solving for ``Z`` and naming the measured open (``Z -> inf``: ``Z_o = A/C``)
and short (``Z = 0``: ``Z_s = B/D``) gives, for every linear fixture::

    Z = K (Z_m - Z_s) / (Z_o - Z_m),     K = D / C

Only the constant ``K`` remains.  A third standard of known impedance
``Z_std`` measured as ``Z_l`` fixes it (the open/short/load correction)::

    K = Z_std (Z_o - Z_l) / (Z_l - Z_s)

With two standards only, the trade assumes the fixture is a series residual
impedance followed by a stray admittance across the part (leads then pads,
an L-section): then ``K = Z_o - Z_s`` exactly and::

    Z = (Z_m - Z_s)(Z_o - Z_s) / (Z_o - Z_m)
      = (Z_m - Z_s) / (1 - (Z_m - Z_s) Y_o),   Y_o = 1 / (Z_o - Z_s)

the open's admittance corrected for the short.  In general
``Z_o - Z_s = A/C - B/D = (AD - BC)/(CD) = 1/(CD)`` for a reciprocal fixture
(``AD - BC = 1``), so the two-standard result is the part's impedance
divided by ``D^2``: exact when ``D = 1`` (series residual at the analyser,
stray admittance across the part), off by about ``2 |D - 1|`` otherwise.
With a stray admittance ``Y_a`` at the analyser's side of leads
``Z_lead``, ``D = 1 + Y_a Z_lead``: negligible for an electrically short fixture, the
reason to measure a load for a longer one.

The corrections are holomorphic in each measured impedance, so independent
circular noise on the part and on each standard reaches the part's impedance
to first order through the complex partial derivatives (`correction_partials`),
adding in power.

References
----------
.. [1] Application literature of the trade on impedance-measurement fixture
   compensation (open/short and open/short/load correction); e.g. the
   impedance-measurement handbooks of the instrument makers (recalled from
   memory, no edition cited).
.. [2] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, section 4.4
   (ABCD matrices of cascaded two-ports).
.. [3] JCGM 100:2008 (GUM), section 5.1.2: first-order propagation of
   uncertainty.
"""

from __future__ import annotations

import dataclasses
import warnings

import numpy as np

from ._connection import NA_CONNECTIONS, InstrumentNoise, dz_ds, impedance_from_s, sigma_z_from_s
from .._errors import MeasurementWarning, ZfitInputError
from .._units import format_band, format_eng

__all__ = [
    "corrected_impedance",
    "correction_partials",
    "compensated",
    "fixture_on_grid",
    "port_extended",
    "standard_with_noise_of",
    "warn_if_not_passive",
]

#: Relative slack on the fixture band's ends: a file that writes 100 MHz as
#: 99.99999e6 still covers a part measured to 100 MHz.
_BAND_SLACK = 1e-6


def _standards(z_open, z_short, z_load, load_ohm):
    if z_load is not None:
        if z_open is None or z_short is None:
            raise ZfitInputError("open/short/load compensation needs all three standards: give the open and the short too")
        if load_ohm is None:
            raise ZfitInputError("the load standard needs its known impedance (--load-value, in ohm)")
    if z_open is None and z_short is None:
        raise ZfitInputError("compensation needs at least an open or a short standard")


def corrected_impedance(z_m, z_open=None, z_short=None, z_load=None, load_ohm=None) -> np.ndarray:
    """Return the part's impedance with the fixture removed.

    Parameters
    ----------
    z_m : array_like of complex
        Impedance measured with the part in the fixture, ohm.
    z_open : array_like of complex, optional
        Impedance measured with the fixture open (part removed), ohm.
    z_short : array_like of complex, optional
        Impedance measured with the fixture shorted where the part sits, ohm.
    z_load : array_like of complex, optional
        Impedance measured with a load standard in place of the part, ohm
        (needs `z_open`, `z_short` and `load_ohm`).
    load_ohm : complex or array_like, optional
        The load standard's known impedance, ohm (may depend on frequency).

    Returns
    -------
    numpy.ndarray
        ``Z_m - Z_s`` (short only), ``Z_m Z_o / (Z_o - Z_m)`` (open only),
        ``(Z_m - Z_s)(Z_o - Z_s) / (Z_o - Z_m)`` (open/short) or
        ``Z_std (Z_o - Z_l)(Z_m - Z_s) / ((Z_l - Z_s)(Z_o - Z_m))``
        (open/short/load); see the module notes for the derivation.

    References
    ----------
    .. [1] Impedance-measurement application literature of the trade,
       open/short and open/short/load compensation (from memory).
    .. [2] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, sec. 4.4.
    """
    _standards(z_open, z_short, z_load, load_ohm)
    zm = np.asarray(z_m, dtype=complex)
    with np.errstate(divide="ignore", invalid="ignore"):
        if z_open is None:
            return zm - np.asarray(z_short, dtype=complex)
        zo = np.asarray(z_open, dtype=complex)
        if z_short is None:
            return zm * zo / (zo - zm)
        zs = np.asarray(z_short, dtype=complex)
        if z_load is None:
            k = zo - zs
        else:
            zl = np.asarray(z_load, dtype=complex)
            k = np.asarray(load_ohm, dtype=complex) * (zo - zl) / (zl - zs)
        return k * (zm - zs) / (zo - zm)


def correction_partials(z_m, z_open=None, z_short=None, z_load=None, load_ohm=None) -> dict[str, np.ndarray]:
    """Return the complex partial derivatives of `corrected_impedance`.

    Parameters
    ----------
    z_m, z_open, z_short, z_load, load_ohm
        As for `corrected_impedance`.

    Returns
    -------
    dict
        ``{"measured": dZ/dZ_m, "open": dZ/dZ_o, "short": dZ/dZ_s,
        "load": dZ/dZ_l}`` for the standards in use.  A circular error
        ``dX`` of standard uncertainty ``sigma_X`` on one of them moves the
        result by ``(dZ/dX) dX``, again circular, of size
        ``|dZ/dX| sigma_X``.

    Notes
    -----
    Written as ``Z = K (Z_m - Z_s) / (Z_o - Z_m)`` the derivatives are, with
    ``D = Z_o - Z_m``: open/short ``dZ/dZ_m = (Z_o - Z_s)^2 / D^2``,
    ``dZ/dZ_s = -((Z_m - Z_s) + (Z_o - Z_s)) / D``,
    ``dZ/dZ_o = -(Z_m - Z_s)^2 / D^2``; open/short/load
    ``dZ/dZ_m = (K + Z) / D``, ``dZ/dZ_s = -K / D + Z / (Z_l - Z_s)``,
    ``dZ/dZ_o = Z / (Z_o - Z_l) - Z / D``,
    ``dZ/dZ_l = -Z / (Z_o - Z_l) - Z / (Z_l - Z_s)`` (logarithmic
    differentiation, arranged to stay finite when ``Z = 0``).
    """
    _standards(z_open, z_short, z_load, load_ohm)
    zm = np.asarray(z_m, dtype=complex)
    one = np.ones_like(zm)
    with np.errstate(divide="ignore", invalid="ignore"):
        if z_open is None:
            return {"measured": one, "short": -one}
        zo = np.asarray(z_open, dtype=complex)
        d = zo - zm
        if z_short is None:
            return {"measured": zo**2 / d**2, "open": -(zm**2) / d**2}
        zs = np.asarray(z_short, dtype=complex)
        if z_load is None:
            return {
                "measured": (zo - zs) ** 2 / d**2,
                "open": -((zm - zs) ** 2) / d**2,
                "short": -((zm - zs) + (zo - zs)) / d,
            }
        zl = np.asarray(z_load, dtype=complex)
        k = np.asarray(load_ohm, dtype=complex) * (zo - zl) / (zl - zs)
        z = k * (zm - zs) / d
        return {
            "measured": (k + z) / d,
            "open": z / (zo - zl) - z / d,
            "short": -k / d + z / (zl - zs),
            "load": -z / (zo - zl) - z / (zl - zs),
        }


def compensated(z_m, sigma_m, open=None, short=None, load=None, load_ohm=None):
    """Return the part's impedance and its standard uncertainty after compensation.

    Parameters
    ----------
    z_m : array_like of complex
        Impedance measured with the part in the fixture, ohm.
    sigma_m : array_like of float
        Its standard uncertainty (complex-circular), ohm.
    open, short, load : tuple (z, sigma), optional
        Each standard's measured impedance and standard uncertainty on the
        part's frequency grid (see `fixture_on_grid`).
    load_ohm : complex or array_like, optional
        The load standard's known impedance, ohm.

    Returns
    -------
    z : numpy.ndarray of complex
        The compensated impedance.
    sigma : numpy.ndarray of float
        Its standard uncertainty, ``sqrt(sum |dZ/dX|^2 sigma_X^2)`` over the
        part's measurement and each standard, taken as independent (GUM
        section 5.1.2, first order).

    References
    ----------
    .. [1] JCGM 100:2008, *Evaluation of measurement data - Guide to the
       expression of uncertainty in measurement*, section 5.1.2.
    """
    zo = None if open is None else open[0]
    zs = None if short is None else short[0]
    zl = None if load is None else load[0]
    z = corrected_impedance(z_m, zo, zs, zl, load_ohm)
    parts = correction_partials(z_m, zo, zs, zl, load_ohm)
    sig = {"measured": sigma_m, "open": None if open is None else open[1],
           "short": None if short is None else short[1], "load": None if load is None else load[1]}
    var = sum(np.abs(parts[k]) ** 2 * np.asarray(sig[k], dtype=float) ** 2 for k in parts)
    return z, np.sqrt(var)


def _band_text(lo, hi):
    return format_band(lo, hi)


def fixture_on_grid(fixture, f_hz, what: str = "fixture"):
    """Return a standard's impedance and uncertainty interpolated onto `f_hz`.

    Interpolation is piecewise-cubic and shape-preserving (PCHIP) of
    ``log|Z|`` and of the unwrapped phase against ``log f``; the uncertainty
    is interpolated as ``log sigma``.  Fixture residuals are power laws over
    decades (an open is close to ``1/(j w C)``, a short to ``R + j w L``),
    for which log-magnitude and phase are straight or gently curved lines on
    a log-frequency axis, while the real and imaginary parts span decades
    between neighbouring points of a sparse sweep.  On the part's own grid
    the values are used as measured.

    Parameters
    ----------
    fixture : Sweep
        The standard as read from its file.
    f_hz : array_like
        The part's frequencies, Hz.
    what : str
        Which standard it is (``"open"``, ``"short"``, ``"load"``), for messages.

    Returns
    -------
    z, sigma : numpy.ndarray
        Complex impedance (ohm) and its standard uncertainty (ohm) at `f_hz`.

    Raises
    ------
    ZfitInputError
        When `f_hz` reaches beyond the fixture's band: no extrapolation.
        The message names both bands and their overlap.

    References
    ----------
    .. [1] F. N. Fritsch and R. E. Carlson, "Monotone piecewise cubic
       interpolation", *SIAM J. Numer. Anal.* 17(2), 238-246, 1980,
       doi:10.1137/0717021.
    """
    f = np.asarray(f_hz, dtype=float)
    ff = np.asarray(fixture.f_hz, dtype=float)
    lo, hi = float(ff[0]), float(ff[-1])
    if f[0] < lo * (1 - _BAND_SLACK) or f[-1] > hi * (1 + _BAND_SLACK):
        olo, ohi = max(lo, float(f[0])), min(hi, float(f[-1]))
        overlap = f"they overlap in {_band_text(olo, ohi)}" if olo < ohi else "they do not overlap at all"
        raise ZfitInputError(
            f"the {what} standard covers {_band_text(lo, hi)} but the part's sweep covers "
            f"{_band_text(f[0], f[-1])}; {overlap}. zfit does not extrapolate a fixture: measure the "
            f"{what} over the part's whole band, or limit the part's sweep to the overlap",
            fixture.source or None,
        )
    z = np.asarray(fixture.z_ohm, dtype=complex)
    s = np.asarray(fixture.sigma_ohm, dtype=float)
    if ff.size == f.size and np.allclose(ff, f, rtol=1e-9, atol=0):
        return z.copy(), s.copy()
    from scipy.interpolate import PchipInterpolator

    x, xq = np.log(ff), np.log(np.clip(f, lo, hi))
    mag = np.abs(z)
    if np.any(mag == 0):
        raise ZfitInputError(f"the {what} standard has |Z| = 0 at a point; its log-magnitude cannot be interpolated", fixture.source or None)
    logm = PchipInterpolator(x, np.log(mag))(xq)
    ph = PchipInterpolator(x, np.unwrap(np.angle(z)))(xq)
    sig = np.exp(PchipInterpolator(x, np.log(s))(xq))
    return np.exp(logm + 1j * ph), sig


def warn_if_not_passive(f, z, sigma, source, what):
    # Re Z below -3 sigma happens by chance at 0.13 % of the points of a
    # lossless part; many more means the correction itself is wrong.
    bad = z.real < -3.0 * sigma / np.sqrt(2.0)
    n = int(bad.sum())
    if n > max(3, 0.02 * z.size):
        i = int(np.flatnonzero(bad)[0])
        warnings.warn(
            f"{source}: after {what} the impedance is not passive (Re Z < -3 sigma) at {n} of {z.size} "
            f"points, first at {format_eng(float(f[i]), 'Hz')}",
            MeasurementWarning,
            stacklevel=3,
        )


def port_extended(sweep, delay_s: float, loss=None):
    """Return a reflection sweep with a length of line removed (port extension).

    The line between the calibrated plane and the part is taken as matched
    to the reference impedance; its one-way delay ``tau`` rotates the
    reflection by ``exp(-j 2 w tau)``, so the part's reflection is
    ``S11 exp(+j 2 w tau)``.  An optional loss term restores the magnitude
    the line's round trip took away.

    Parameters
    ----------
    sweep : Sweep
        A reflection measurement with its S11 (`Sweep.s_param`), reference
        impedance and noise model.
    delay_s : float
        One-way electrical delay of the line to remove, seconds (about
        5 ps per mm of PTFE coax, common practice).
    loss : float, optional
        One-way loss of the line in dB at 1 GHz, scaled with ``sqrt(f)``
        (conductor skin effect, the dominant loss of short coax; dielectric
        loss, linear in f, is neglected).  The reflection gains
        ``2 * loss * sqrt(f / 1 GHz)`` dB.  None or 0: lossless line.

    Returns
    -------
    Sweep
        The same sweep with S11, Z and sigma recomputed at the part's plane.
        The noise of the measured S11 is scaled by the same gain, so sigma
        follows the noise model (`Sweep.noise`).

    Raises
    ------
    ZfitInputError
        For a sweep that is not a reflection measurement with its S11, or
        whose impedance was already changed (port extension comes before
        fixture compensation), or for a negative delay or loss.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012,
       section 2.3 (reflection coefficient along a terminated line).
    """
    delay_s = float(delay_s)
    src = sweep.source or None
    if sweep.connection != "reflection" or sweep.s_param is None:
        raise ZfitInputError(
            f"port extension needs a reflection (S11) measurement with its S-parameters; this sweep is "
            f"{sweep.connection}" + ("" if sweep.s_param is not None else " without S-parameters"),
            src,
        )
    if not np.isfinite(delay_s) or delay_s < 0:
        raise ZfitInputError(f"port delay must be a non-negative number of seconds (got {delay_s:g})", src)
    loss_db = 0.0 if loss is None else float(loss)
    if not np.isfinite(loss_db) or loss_db < 0:
        raise ZfitInputError(f"port loss must be a non-negative number of dB at 1 GHz (got {loss_db:g})", src)
    z0 = 50.0 if sweep.reference_ohm is None else float(sweep.reference_ohm)
    s_meas = np.asarray(sweep.s_param, dtype=complex)
    z_raw = impedance_from_s(s_meas, "reflection", z0)
    if not np.allclose(z_raw, sweep.z_ohm, rtol=1e-7, atol=1e-12):
        raise ZfitInputError(
            "port extension must come before fixture compensation: this sweep's impedance no longer follows from its S11",
            src,
        )
    f = np.asarray(sweep.f_hz, dtype=float)
    gain = 10.0 ** (2.0 * loss_db * np.sqrt(f / 1e9) / 20.0)
    s = s_meas * gain * np.exp(2j * np.pi * f * 2.0 * delay_s)
    noise = sweep.noise if sweep.noise is not None else InstrumentNoise()
    z = impedance_from_s(s, "reflection", z0)
    sigma = np.abs(dz_ds(s, "reflection", z0)) * gain * noise.sigma(s_meas)
    if not (np.all(np.isfinite(z)) and np.all(np.isfinite(sigma))):
        raise ZfitInputError(
            "port extension puts |S11| at 1 exactly at a point (a delay or loss too large for this sweep)", src
        )
    what = f"port extension by {format_eng(delay_s, 's')}" + (f" and {loss_db:g} dB at 1 GHz" if loss_db else "")
    warn_if_not_passive(f, z, sigma, sweep.source, f"{what} (delay or loss too large?)")
    return dataclasses.replace(
        sweep,
        z_ohm=z,
        sigma_ohm=sigma,
        s_param=s,
        notes=tuple(sweep.notes) + (what + " removed from S11",),
    )


def standard_with_noise_of(fixture, noise, kind_like):
    """Re-derive a standard's sigma with the part's noise model, when both
    came from the same kind of file (the same instrument and settings)."""
    same_kind = (fixture.s_param is None) == (kind_like.s_param is None)
    if noise is None or not same_kind:
        return fixture
    if fixture.s_param is not None and fixture.connection in NA_CONNECTIONS:
        z0 = 50.0 if fixture.reference_ohm is None else float(fixture.reference_ohm)
        sig = sigma_z_from_s(fixture.s_param, fixture.connection, z0, noise)
    else:
        sig = noise.sigma(fixture.z_ohm)
    return dataclasses.replace(fixture, sigma_ohm=np.asarray(sig, dtype=float), noise=noise)
