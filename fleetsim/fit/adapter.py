"""The one door to the ``reliability`` package (right-censored Weibull and lognormal fits).

``reliability`` changes the whole process when it is imported: it calls
``np.seterr("ignore")`` at module level, imports ``matplotlib.pyplot``, and
sets pandas display options. Its fitters print and plot by default, set
standard errors silently to 0 when the Hessian is singular, and return the
least-squares guess with a printed warning when the likelihood optimisers
fail. This module therefore

* imports it lazily, the first time a fit is asked for, with matplotlib's
  non-interactive Agg backend selected first (unless the caller has already
  imported ``matplotlib.pyplot`` and chosen a backend) and numpy's error
  state and the pandas display options restored afterwards;
* always passes ``show_probability_plot=False, print_results=False``;
* saves and restores ``np.geterr()`` around every call, captures anything
  printed on standard output, and ignores the package's own warnings;
* raises :class:`FitError` when the optimisers failed (``optimizer`` is
  None, or a printed "WARNING") or a standard error is zero or not finite;
* returns :class:`fleetsim.fit.likelihood.MLEFit`, a fleetsim type.

No other module of fleetsim imports ``reliability``. The calls use process-
wide state (``sys.stdout``, numpy's error state), so they are not
thread-safe; use processes for parallel fitting.
"""

from __future__ import annotations

import contextlib
import importlib
import io
import math
import re
import sys
import warnings
from collections.abc import Callable, Iterator
from types import ModuleType
from typing import Any

import numpy as np

from fleetsim.fit.errors import FitError
from fleetsim.fit.likelihood import MLEFit

#: pandas display options that importing ``reliability`` overwrites.
_PANDAS_OPTIONS = ("display.float_format", "display.max_columns", "display.width")
_ANSI = re.compile(r"\x1b\[[0-9;]*m")

_FITTERS: ModuleType | None = None


@contextlib.contextmanager
def _contained() -> Iterator[io.StringIO]:
    """Capture stdout, silence warnings and restore numpy's error state on exit."""
    old = np.geterr()
    buf = io.StringIO()
    try:
        with contextlib.redirect_stdout(buf), warnings.catch_warnings():
            warnings.simplefilter("ignore")
            yield buf
    finally:
        np.seterr(**old)


def _fitters() -> ModuleType:
    """Import ``reliability.Fitters`` once, undoing its import-time side effects."""
    global _FITTERS
    if _FITTERS is not None:
        return _FITTERS
    import matplotlib
    import pandas as pd

    if "matplotlib.pyplot" not in sys.modules:
        matplotlib.use("Agg")
    saved = {}
    for key in _PANDAS_OPTIONS:
        with contextlib.suppress(KeyError, pd.errors.OptionError):
            saved[key] = pd.get_option(key)
    try:
        with _contained():
            _FITTERS = importlib.import_module("reliability.Fitters")
    except ImportError as exc:  # pragma: no cover - a dependency of fleetsim
        raise FitError(
            "reliability", f"the 'reliability' package is needed for fitting ({exc})"
        ) from None
    finally:
        for key, value in saved.items():
            pd.set_option(key, value)
    return _FITTERS


def _call(name: str, what: str, **kwargs: Any) -> Any:
    """Run fitter ``name`` with printing and plotting off; raise FitError on failure."""
    fitter: Callable[..., Any] = getattr(_fitters(), name)
    with _contained() as out:
        try:
            fit = fitter(show_probability_plot=False, print_results=False, **kwargs)
        except Exception as exc:  # the package's own checks and numerical failures
            message = _ANSI.sub("", str(exc)).strip().splitlines()
            detail = message[0] if message else type(exc).__name__
            raise FitError(
                what, f"the reliability package could not fit these records: {detail}"
            ) from exc
    printed = _ANSI.sub("", out.getvalue())
    if getattr(fit, "optimizer", None) is None or "WARNING" in printed:
        lines = [ln.strip() for ln in printed.splitlines() if "WARNING" in ln]
        detail = f" ({lines[0]})" if lines else ""
        raise FitError(
            what,
            "the maximum-likelihood fit did not converge; the records may hold too few failures "
            f"or fit this model badly{detail}",
        )
    return fit


def _check_se(what: str, **ses: float) -> None:
    for name, se in ses.items():
        if not (math.isfinite(se) and se > 0):
            raise FitError(
                what,
                f"the standard error of {name} is {se!r} (singular information matrix); "
                "the records do not determine this model",
            )


def _arrays(failures_h: np.ndarray, suspensions_h: np.ndarray) -> dict[str, Any]:
    s = np.asarray(suspensions_h, dtype=float)
    return {
        "failures": np.asarray(failures_h, dtype=float),
        # the package rejects zero ages; a suspension at 0 h carries no information
        "right_censored": s[s > 0] if s.size and np.any(s > 0) else None,
    }


def weibull_2p(failures_h: np.ndarray, suspensions_h: np.ndarray) -> MLEFit:
    """Two-parameter Weibull MLE by ``reliability.Fitters.Fit_Weibull_2P``.

    Parameters
    ----------
    failures_h
        Exact failure ages, hours (at least 2).
    suspensions_h
        Right-censored ages, hours.

    Returns
    -------
    MLEFit
        ``params`` scale_h (α), shape (β), location_h = 0; covariance of
        (scale_h, shape) from the package's Hessian.

    Raises
    ------
    FitError
        When the package refuses the data, does not converge, or returns a
        zero or undefined standard error.
    """
    what = "Weibull 2P fit"
    fit = _call("Fit_Weibull_2P", what, **_arrays(failures_h, suspensions_h))
    alpha, beta = float(fit.alpha), float(fit.beta)
    se_a, se_b, cov_ab = float(fit.alpha_SE), float(fit.beta_SE), float(fit.Cov_alpha_beta)
    _check_se(what, scale=se_a, shape=se_b)
    return MLEFit(
        family="weibull",
        params={"scale_h": alpha, "shape": beta, "location_h": 0.0},
        cov_names=("scale_h", "shape"),
        covariance=np.array([[se_a**2, cov_ab], [cov_ab, se_b**2]]),
        log_likelihood=float(fit.loglik),
        method=f"MLE (reliability, {fit.optimizer})",
    )


def lognormal_2p(failures_h: np.ndarray, suspensions_h: np.ndarray) -> MLEFit:
    """Two-parameter lognormal MLE by ``reliability.Fitters.Fit_Lognormal_2P``.

    Returns
    -------
    MLEFit
        ``params`` mu, sigma (of ln hours); covariance of (mu, sigma).

    Raises
    ------
    FitError
        As :func:`weibull_2p`.
    """
    what = "lognormal fit"
    fit = _call("Fit_Lognormal_2P", what, **_arrays(failures_h, suspensions_h))
    mu, sigma = float(fit.mu), float(fit.sigma)
    se_m, se_s, cov = float(fit.mu_SE), float(fit.sigma_SE), float(fit.Cov_mu_sigma)
    _check_se(what, mu=se_m, sigma=se_s)
    return MLEFit(
        family="lognormal",
        params={"mu": mu, "sigma": sigma},
        cov_names=("mu", "sigma"),
        covariance=np.array([[se_m**2, cov], [cov, se_s**2]]),
        log_likelihood=float(fit.loglik),
        method=f"MLE (reliability, {fit.optimizer})",
    )
