"""Small kernels of the peak analysis: median, least squares, pseudo-inverse.

Each gives the numbers of the plain NumPy call it stands for (``np.median``;
``np.linalg.lstsq`` with ``np.linalg.pinv`` of the normal matrix; ``np.linalg.pinv``) to
rounding, with the same cut-offs for small singular values, on the tall, narrow designs
of a voltammogram (hundreds to thousands of rows, two to six columns): one QR reduction,
then the SVD of the small triangle, so dropping a design column needs no new
factorisation.

A least-squares problem goes through three steps: the caller fills a column-major buffer
from :func:`augmented` with the design columns and the data as its last column;
:func:`reduce_rows` replaces it by the triangle R of its QR factorisation, an orthogonal
transformation that leaves the singular values and right singular vectors of the design
and the projection of the data unchanged; :func:`solve_least_squares` or
:func:`solve_pinv` finish on that small matrix, with any subset of the design columns
(dropping a column does not need a new factorisation).

References
----------
Golub, G. H.; Van Loan, C. F. Matrix Computations, 4th ed. (2013), §5.3 (least squares by
QR, then by the SVD of R).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

__all__ = [
    "median_in_place",
    "augmented",
    "reduce_rows",
    "solve_least_squares",
    "solve_pinv",
]

_EPS = float(np.finfo(float).eps)
#: np.linalg.pinv's default cut-off, relative to the largest singular value.
_PINV_RCOND = 1e-15


def median_in_place(a: np.ndarray) -> float:
    """Median of a 1-D float array, as ``np.median`` computes it; reorders ``a``.

    One partition about the upper middle element (a single ``kth`` takes NumPy's
    vectorised selection, several at once do not); for an even count the lower middle
    element is the largest value below it, and the two are averaged as ``np.median``
    averages them. The input must hold no NaN.
    """
    n = a.size
    if n == 0:
        raise ValueError("median of an empty array")
    k = n // 2
    a.partition(k)
    upper = a[k]
    if n % 2:
        return float(upper)
    return float((a[:k].max() + upper) / 2.0)


def augmented(rows: int, columns: int) -> np.ndarray:
    """Empty column-major ``rows × (columns + 1)`` buffer: design columns, then the data."""
    return np.empty((columns + 1, rows)).T


def reduce_rows(A: np.ndarray) -> tuple[np.ndarray, int]:
    """The triangle R of ``A = QR`` and the number of rows of A.

    For a design X with data y, ``[X | y] = Q·R`` with Q orthogonal, so X and the leading
    columns of R have the same singular values and right singular vectors, and the
    least-squares fit of y on any subset of the columns of X equals that of the last
    column of R on the same columns of R. A matrix with fewer rows than columns is
    returned as it is.
    """
    m, k = A.shape
    if m < k:
        return np.array(A), m
    return np.linalg.qr(A, mode="r"), m


def _minimum_norm(
    D: np.ndarray, c: np.ndarray, rcond: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Minimum-norm least-squares solution of D·x ≈ c, singular values and Vᵀ of D.

    Singular values at or below ``rcond`` times the largest count as zero (NumPy's SVD of
    the small reduced matrix).
    """
    U, S, Vt = np.linalg.svd(D, full_matrices=False)
    inv = _reciprocal(S, rcond * S[0] if S.size else 0.0)
    return Vt.T @ (inv * (U.T @ c)), S, Vt


def _reciprocal(S: np.ndarray, cut: float) -> np.ndarray:
    """1/S where S > cut, else 0 (S is sorted in decreasing order)."""
    if S.size and S[-1] > cut:  # the usual case: nothing is cut
        return 1.0 / S
    return np.divide(1.0, S, out=np.zeros_like(S), where=S > cut)


def solve_least_squares(
    R: np.ndarray, rows: int, columns: Sequence[int] | None = None
) -> tuple[np.ndarray, np.ndarray]:
    """Coefficients and (XᵀX)⁺ of the fit reduced by :func:`reduce_rows`.

    ``columns`` picks design columns of R (default: all but the last, which is the data);
    ``rows`` is the row count of the original design. The cut-offs are those of
    ``np.linalg.lstsq(X, y, rcond=None)`` for the coefficients (singular values at or
    below ``eps·max(rows, columns)`` of the largest dropped) and of ``np.linalg.pinv(XᵀX)``
    for the inverse (squares at or below ``1e-15`` of the largest square).
    """
    p = R.shape[1] - 1
    D = R[:, :p] if columns is None else R[:, list(columns)]
    coef, S, Vt = _minimum_norm(D, R[:, p], _EPS * max(rows, D.shape[1]))
    top = float(S[0]) if S.size else 0.0
    inv2 = _reciprocal(S * S, _PINV_RCOND * top * top)
    return coef, (Vt.T * inv2) @ Vt


def solve_pinv(R: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``np.linalg.pinv(X) @ y`` and the small P with ``np.linalg.pinv(X) = P @ X.T``.

    With X = U·S·Vᵀ and the singular values above ``1e-15`` of the largest kept (the
    cut-off of ``np.linalg.pinv``), pinv(X) = V·S⁻¹·Uᵀ = (V·S⁻²·Vᵀ)·Xᵀ, because the kept
    columns of U are X·V·S⁻¹; so the pseudo-inverse itself, as wide as the data, is never
    formed. R is from :func:`reduce_rows`, its last column the data.
    """
    p = R.shape[1] - 1
    b, S, Vt = _minimum_norm(R[:, :p], R[:, p], _PINV_RCOND)
    inv = _reciprocal(S, _PINV_RCOND * S.max())
    return b, (Vt.T * (inv * inv)) @ Vt
