"""The chirp-z transform along one axis, in the array's own precision (Bluestein's algorithm).

X_m = Σ_n x_n exp(−2πi α n m), m = 0 .. M−1, for any real α (the zoomed DFT that lands a
Fourier stage on a grid other than its natural one). With n m = (n² + m² − (m − n)²)/2 the sum
is a convolution with the chirp exp(iπ α k²), done by three FFTs of a length L >= N + M − 1
(Bluestein, IEEE Trans. Audio Electroacoust. 18, 451 (1970); Rabiner, Schafer and Rader,
Bell Syst. Tech. J. 48, 1249 (1969)). ``scipy.signal.CZT`` computes the same transform, but
always in complex128 and with its chirps built for each call; here a complex64 field stays
complex64 (half the memory traffic) and the chirps and the kernel spectrum of a given
(N, M, α) are kept for the next call. The tests check this against ``scipy.signal.CZT``.
"""

from __future__ import annotations

import functools

import numpy as np
import scipy.fft

from benchcheck.thread_pools import threads_for

__all__ = ["chirp_z"]


@functools.lru_cache(maxsize=16)
def _chirps(n: int, m: int, alpha: float, dtype_name: str) -> tuple[np.ndarray, np.ndarray, np.ndarray, int]:
    """Input chirp (n), output chirp (m), spectrum of the convolution kernel (L), and L."""
    length = scipy.fft.next_fast_len(n + m - 1)
    k = np.arange(max(n, m), dtype=np.float64)
    # (α k²) mod 2 in double precision keeps the phase exact for large k
    chirp = np.exp(-1j * np.pi * np.mod(alpha * k**2, 2.0))
    kernel = np.zeros(length, dtype=np.complex128)
    kernel[:m] = np.conj(chirp[:m])
    kernel[length - n + 1:] = np.conj(chirp[1:n][::-1])
    dtype = np.dtype(dtype_name)
    spectrum = scipy.fft.fft(kernel).astype(dtype)
    input_chirp, output_chirp = chirp[:n].astype(dtype), chirp[:m].astype(dtype)
    for array in (input_chirp, output_chirp, spectrum):
        array.flags.writeable = False  # shared between calls
    return input_chirp, output_chirp, spectrum, length


def chirp_z(values: np.ndarray, alpha: float, m_out: int, axis: int, workers: int = -1) -> np.ndarray:
    """Σ_n values[n] exp(−2πi α n m) for m = 0 .. m_out − 1 along ``axis``.

    Parameters
    ----------
    values : numpy.ndarray
        Complex input (complex64 or complex128); the result has the same precision.
    alpha : float
        Frequency step in cycles per sample (dimensionless); any real value.
    m_out : int
        Number of output samples.
    axis : int
        The array axis transformed.
    workers : int
        Threads for scipy.fft (-1: all cores).

    Returns
    -------
    numpy.ndarray
        Shape of ``values`` with ``m_out`` samples along ``axis``.
    """
    dtype = np.complex128 if values.dtype == np.complex128 else np.complex64
    n = values.shape[axis]
    input_chirp, output_chirp, spectrum, length = _chirps(n, int(m_out), float(alpha), np.dtype(dtype).name)
    shape = [1] * values.ndim
    shape[axis] = -1
    weighted = values.astype(dtype, copy=False) * input_chirp.reshape(shape)
    workers = threads_for(weighted.nbytes, workers)
    transformed = scipy.fft.fft(weighted, n=length, axis=axis, overwrite_x=True, workers=workers)
    transformed *= spectrum.reshape(shape)
    convolved = scipy.fft.ifft(transformed, axis=axis, overwrite_x=True, workers=workers)
    kept = tuple(slice(0, m_out) if index == axis else slice(None) for index in range(values.ndim))
    return np.multiply(convolved[kept], output_chirp.reshape(shape))  # one pass: the first m_out, chirped
