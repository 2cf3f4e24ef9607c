"""One-number linear interpolation for the engine's step loop (compiled into it with numba, see
:mod:`core.model.dispatch.kernel`)."""


def _interp(x, xp, fp):
    """``np.interp`` for one number on a rising table, step for step as NumPy computes it.

    The same binary search, the same slope ``(fp[j+1] - fp[j]) / (xp[j+1] - xp[j])`` and the same
    ``slope * (x - xp[j]) + fp[j]``, ends held flat; written out because NumPy's general routine costs more
    than the rest of a step when it is called for one number (docs/performance.md).
    """
    if x != x:  # NaN passes through, as in NumPy
        return x
    last = xp.shape[0] - 1
    if x <= xp[0]:
        return fp[0]
    if x >= xp[last]:
        return fp[last]
    lo = 0
    hi = last
    while hi - lo > 1:  # xp[lo] <= x < xp[hi]
        mid = (lo + hi) >> 1
        if xp[mid] <= x:
            lo = mid
        else:
            hi = mid
    if xp[lo] == x:
        return fp[lo]
    slope = (fp[lo + 1] - fp[lo]) / (xp[lo + 1] - xp[lo])
    return slope * (x - xp[lo]) + fp[lo]
