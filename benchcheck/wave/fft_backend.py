"""An optional faster FFT through scipy.fft's own backend mechanism.

Every transform in benchcheck goes through ``scipy.fft``. With the optional extra
``benchcheck[fast]`` (pyFFTW) installed, ``use_fft_backend("pyfftw")`` registers pyFFTW's
scipy.fft interface with ``scipy.fft.set_global_backend`` (the mechanism scipy documents for
swapping the FFT implementation), so the same calls run on FFTW. The default install stays
pure scipy: nothing changes unless the backend is asked for, by this function or by the
environment variable ``BENCHCHECK_FFT_BACKEND=pyfftw``, read when a study or simulation
starts (``apply_fft_backend_from_environment``; unset, it changes nothing). Results agree
within float32 rounding (tested when pyFFTW is importable).
"""

from __future__ import annotations

import os

import numpy as np
import scipy.fft

from benchcheck.errors import BenchcheckError

__all__ = ["FFT_BACKENDS", "ENVIRONMENT_VARIABLE", "use_fft_backend", "apply_fft_backend_from_environment",
           "fft_backend_available", "fft_backend_in_use"]

FFT_BACKENDS = ("scipy", "pyfftw")
ENVIRONMENT_VARIABLE = "BENCHCHECK_FFT_BACKEND"

_current = "scipy"
_PLANS_KEPT_S = 600.0  # an unused plan is dropped after this long (pyFFTW's default: 0.1 s)
#: The smallest square window whose transforms go to FFTW.
FFTW_MIN_WINDOW = 256


class _WindowsOnFftw:
    """A scipy.fft backend: transforms of a square window of at least ``FFTW_MIN_WINDOW``
    samples a side on FFTW with measured plans, every other transform on scipy's own.

    FFTW's quick default plans ran 2.5x slower than scipy.fft here (a 1024² complex64
    transform on 2 threads: 13.7 ms against 5.6 ms); measured plans ran faster (3.5 ms) but
    cost 0.3-0.8 s of planning per new shape. A study's window shapes are few and fixed, so
    their plans are made once and kept; the smaller transforms (a box's lines, a metric's
    band) change shape from trial to trial, where planning would cost more than it saves.
    """

    __ua_domain__ = "numpy.scipy.fft"

    @staticmethod
    def __ua_function__(method, args, kwargs):
        import pyfftw.interfaces.scipy_fft

        values = args[0] if args else kwargs.get("x")
        shape = np.shape(values)
        if len(shape) == 2 and shape[0] == shape[1] >= FFTW_MIN_WINDOW:
            return pyfftw.interfaces.scipy_fft.__ua_function__(method, args, kwargs)
        with scipy.fft.set_backend("scipy", only=True):
            return method(*args, **kwargs)


def fft_backend_available(name: str) -> bool:
    """True when the backend ``name`` can be used here (pyFFTW installed, for "pyfftw")."""
    if name == "scipy":
        return True
    if name == "pyfftw":
        try:
            import pyfftw.interfaces.scipy_fft  # noqa: F401
        except ImportError:
            return False
        return True
    return False


def fft_backend_in_use() -> str:
    """The backend set by :func:`use_fft_backend` ("scipy" unless asked otherwise)."""
    return _current


def use_fft_backend(name: str) -> str:
    """Make ``name`` ("scipy" or "pyfftw") the global scipy.fft backend; returns the previous one.

    Raises
    ------
    BenchcheckError
        For an unknown name, or "pyfftw" without pyFFTW installed (``pip install 'benchcheck[fast]'``).
    """
    global _current
    if name not in FFT_BACKENDS:
        raise BenchcheckError(f"unknown FFT backend '{name}' (one of {', '.join(FFT_BACKENDS)})")
    previous = _current
    if name == "pyfftw":
        if not fft_backend_available("pyfftw"):
            raise BenchcheckError("the FFT backend 'pyfftw' needs pyFFTW: pip install 'benchcheck[fast]'")
        import pyfftw
        import pyfftw.interfaces.scipy_fft

        pyfftw.config.PLANNER_EFFORT = "FFTW_MEASURE"
        pyfftw.interfaces.cache.enable()  # keep FFTW plans between calls of the same shape
        pyfftw.interfaces.cache.set_keepalive_time(_PLANS_KEPT_S)
        scipy.fft.set_global_backend(_WindowsOnFftw)
    else:
        scipy.fft.set_global_backend("scipy")
    _current = name
    return previous


def apply_fft_backend_from_environment() -> str:
    """Use the backend named by ``BENCHCHECK_FFT_BACKEND`` when it is set; returns the backend
    in use. Unset, the process keeps the backend it has: one chosen with
    :func:`use_fft_backend` is not undone by the next simulator made."""
    name = os.environ.get(ENVIRONMENT_VARIABLE, "").strip()
    if name and name != _current:
        use_fft_backend(name)
    return _current
