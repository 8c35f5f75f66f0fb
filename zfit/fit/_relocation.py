"""The relaxed vector-fitting iteration for a given number of poles.

Starting poles are relocated to the zeros of a weighting function sigma(s),
fitted together with sigma*H in one linear least-squares problem, until they
stop moving; the residues are then found with the poles fixed.

References
----------
B. Gustavsen, "Improving the pole relocating properties of vector fitting",
IEEE Trans. Power Delivery 21(3), 1587-1592, 2006, doi:10.1109/TPWRD.2005.860281.
D. Deschrijver, M. Mrozowski, T. Dhaene and D. De Zutter, "Macromodeling of
multiport systems using a fast implementation of the vector fitting method",
IEEE Microwave and Wireless Components Letters 18(6), 383-385, 2008,
doi:10.1109/LMWC.2008.922585.
"""

from __future__ import annotations

import math

import numpy as np

from ._basis import extra_columns, pole_basis
from ._poles import join_poles, pole_change, split_poles, starting_poles
from ._qr import col_norms, r_factor
from ._rational import VFIteration
from ._residues import model_from_poles

__all__ = ["Relocator", "fit_with_count"]


class Relocator:
    """The data-side pieces of the relocation problem that stay fixed over
    the iterations (real-stacked weighted data and optional-term columns)."""

    def __init__(self, s, h, w, flags):
        self.s = s
        self.n = s.size
        hw = h * w
        self.hw = hw
        self.hw_re, self.hw_im = hw.real[:, None], hw.imag[:, None]
        ex = extra_columns(s, *flags) * w[:, None]
        self.extras = np.concatenate([ex.real, ex.imag], axis=0)
        self.n_extra = ex.shape[1]
        self.w = w[:, None]
        # Relaxation row scale: size of the weighted data per point, as in
        # Gustavsen's published code.
        self.scale = float(np.linalg.norm(hw)) / self.n

    def __call__(self, preal, pcplx):
        """One relaxed pole relocation (Gustavsen 2006) -> (zeros of sigma,
        relocation residual, sigma's constant).

        Unknowns: the fit part (pole basis, optional terms) and
        sigma(s) = sum c~ phi + d~.  The fit block is eliminated by a QR
        factorisation, leaving the small sigma block R22 (as in the fast VF of
        Deschrijver et al. 2008), to which the relaxation row
        Re sum_k sigma(s_k) = N is appended.
        """
        n = self.n
        phi = pole_basis(self.s, preal, pcplx)
        npole = phi.shape[1]
        nfit = npole + self.n_extra
        m = nfit + npole + 1
        pr, pi = phi.real, phi.imag
        A = np.empty((2 * n, m), order="F")
        A[:n, :npole] = pr * self.w
        A[n:, :npole] = pi * self.w
        A[:, npole:nfit] = self.extras
        # -(h w) phi, real and imaginary parts
        A[:n, nfit : nfit + npole] = self.hw_im * pi - self.hw_re * pr
        A[n:, nfit : nfit + npole] = -(self.hw_re * pi + self.hw_im * pr)
        A[:n, -1] = -self.hw_re[:, 0]
        A[n:, -1] = -self.hw_im[:, 0]
        norms = col_norms(A)
        A /= norms
        R = r_factor(A, overwrite=True)
        R22 = R[nfit:, nfit:] * norms[None, nfit:]
        crow = np.empty(npole + 1)
        crow[:npole] = pr.sum(axis=0)
        crow[npole] = n
        crow *= self.scale
        M = np.vstack([R22, crow[None, :]])
        rhs = np.zeros(M.shape[0])
        rhs[-1] = n * self.scale
        cn = col_norms(M)
        x = np.linalg.lstsq(M / cn, rhs, rcond=None)[0] / cn
        dt = x[-1]
        if not (1e-8 < abs(dt) < 1e8):
            # sigma's constant collapsed: fall back to the classic form d~ = +-1.
            dt = 1.0 if dt >= 0 else -1.0
            cn2 = col_norms(R22[:, :-1])
            c = np.linalg.lstsq(R22[:, :-1] / cn2, -R22[:, -1] * dt, rcond=None)[0] / cn2
            x = np.concatenate([c, [dt]])
        r = R22 @ x
        res = math.sqrt(float(r @ r) / n)
        c = x[:-1]
        # Zeros of sigma: eig(A - b c^T / d~) in the real block form.
        nr = preal.size
        Am = np.zeros((npole, npole))
        bv = np.zeros(npole)
        idx = np.arange(nr)
        Am[idx, idx] = preal
        bv[:nr] = 1.0
        if pcplx.size:
            i = nr + 2 * np.arange(pcplx.size)
            Am[i, i] = Am[i + 1, i + 1] = pcplx.real
            Am[i, i + 1] = pcplx.imag
            Am[i + 1, i] = -pcplx.imag
            bv[i] = 2.0
        zeros = np.linalg.eigvals(Am - np.outer(bv, c) / dt)
        return zeros, res, float(dt)


#: Noisy data that the model cannot quite describe make the poles creep by
#: ever smaller steps instead of settling to round-off.  A fit counts as
#: converged also when, twice in a row, no pole moved by more than
#: _SETTLED_POLES (relative) and the relocation residual changed by less than
#: _SETTLED_RESIDUAL (relative): far below any pole's statistical uncertainty;
#: once is enough when the poles moved by less than a tenth of _SETTLED_POLES.
#: On exact data the residual keeps falling by orders of magnitude until
#: round-off, so there `pole_tol` decides.
_SETTLED_POLES = 1e-5
_SETTLED_RESIDUAL = 1e-5


def fit_with_count(s, h, w, flags, w0, fband, n_poles, n_real, init, n_iter, pole_tol, absolute_sigma, extra,
               stall_tol=0.0, history=()):
    """Vector fitting with a given number of poles.

    With ``stall_tol > 0`` (trial fits of the automatic count) the relocation
    also stops when its residual has changed by less than that fraction in two
    successive iterations: the residual, which decides the count, is settled
    even if a hopeless pole is still drifting.
    """
    if init is not None:
        preal, pcplx = split_poles(np.asarray(init, complex) / w0)
    else:
        preal, pcplx = split_poles(starting_poles(fband[0], fband[1], n_poles, n_real) / w0)
    relocate = Relocator(s, h, w, flags)
    history = list(history)
    converged = preal.size + pcplx.size == 0
    stalls = settles = 0
    start = len(history)
    for it in range(start + 1, start + n_iter + 1) if not converged else ():
        zeros, res, dt = relocate(preal, pcplx)
        nreal, ncplx = split_poles(zeros)
        # A pole exactly at the origin would duplicate the 1/s column.
        nreal = np.where(nreal == 0.0, -1e-9, nreal)
        change = pole_change(preal, pcplx, nreal, ncplx)
        preal, pcplx = nreal, ncplx
        new = join_poles(preal, pcplx)
        if history:
            prev = history[-1].rms_normalized_residual
            rel = abs(res - prev) / max(prev, 1e-300)
            stalls = stalls + 1 if stall_tol and rel <= stall_tol else 0
            settles = settles + 1 if (rel <= _SETTLED_RESIDUAL and change <= _SETTLED_POLES) else 0
        history.append(VFIteration(it, new * w0, change, res, dt))
        if change < pole_tol or settles >= 2 or (settles and change <= _SETTLED_POLES / 10):
            converged = True
            break
        if stalls >= 2:
            break
    return model_from_poles(
        s, h, w, preal, pcplx, flags, w0, absolute_sigma,
        dict(iterations=tuple(history), converged=converged, **extra),
    )
