"""An optional faster FFT through scipy.fft's own backend mechanism.

Every transform in benchcheck goes through ``scipy.fft``. With the optional extra
``benchcheck[fast]`` (pyFFTW) installed, ``use_fft_backend("pyfftw")`` registers pyFFTW's
scipy.fft interface with ``scipy.fft.set_global_backend`` (the mechanism scipy documents for
swapping the FFT implementation), so the same calls run on FFTW. The default install stays
pure scipy: nothing changes unless the backend is asked for, by this function or by the
environment variable ``BENCHCHECK_FFT_BACKEND=pyfftw``, read when a study or simulation
starts (``apply_fft_backend_from_environment``). Results agree within float32 rounding
(tested when pyFFTW is importable).
"""

from __future__ import annotations

import os

import scipy.fft

from benchcheck.errors import BenchcheckError

__all__ = ["FFT_BACKENDS", "ENVIRONMENT_VARIABLE", "use_fft_backend", "apply_fft_backend_from_environment",
           "fft_backend_available"]

FFT_BACKENDS = ("scipy", "pyfftw")
ENVIRONMENT_VARIABLE = "BENCHCHECK_FFT_BACKEND"

_current = "scipy"


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

        pyfftw.interfaces.cache.enable()  # keep FFTW plans between calls of the same shape
        scipy.fft.set_global_backend(pyfftw.interfaces.scipy_fft)
    else:
        scipy.fft.set_global_backend("scipy")
    _current = name
    return previous


def apply_fft_backend_from_environment() -> str:
    """Use the backend named by ``BENCHCHECK_FFT_BACKEND`` (default "scipy"); returns it."""
    name = os.environ.get(ENVIRONMENT_VARIABLE, "").strip() or "scipy"
    if name != _current:
        use_fft_backend(name)
    return name
