"""Compiled numeric kernels: the one place that knows about numba.

A kernel is written once as a plain Python function of floats, ints, bools, tuples and numpy
arrays (no classes, no keyword arguments, no Python objects), in the module that uses it. The
same source runs in two ways:

- as plain Python (small jobs, or where numba is missing): the caller may pass lists and tuples
  instead of arrays, which plain Python indexes faster than numpy arrays;
- compiled by numba (``numba.njit(cache=True)``): `compiled(namespace, names)` builds the
  family of dispatchers on first need, with globals that point to each other, so a kernel
  calling a helper calls the helper's compiled version. Numba is imported only then, never when
  a core module is imported (the command line must start fast).

`use_compiled(work)` decides per call, from the environment variable PACING_KERNELS:

- ``auto`` (the default): compiled when the kernels are already loaded in this process, or when
  the job is large enough (`work` ≥ COMPILED_WORK_THRESHOLD) that plain Python would take
  longer than loading the compiled kernels from numba's cache; plain Python otherwise (a
  command that runs several small jobs stays fast to start);
- ``compiled``: always compiled (numba must be importable);
- ``python``: never compiled.

With NUMBA_DISABLE_JIT=1 numba hands back the plain functions, so the "compiled" path runs the
kernels' source as plain Python over numpy arrays: CI runs the physics and plan tests that way
too. Compiled machine code is cached by numba beside the sources (``__pycache__``), in a
user-wide cache directory when the package directory is read-only, or in NUMBA_CACHE_DIR when
that is set; `warm_up` loads (or compiles, the first time: about 15-30 s) every kernel once and
says how long it took. numba checks a cached kernel against its own source file only: after
editing this module (the compiled hypot is inlined into every kernel) delete the caches,
``find pacing -name '*.nb[ic]' -delete``; an install or upgrade rewrites every file.
"""

from __future__ import annotations

import contextlib
import importlib
import importlib.util
import math
import os
import sys
import threading
import time
import types
from collections.abc import Callable, Iterable, Iterator, Mapping
from typing import Any

from pacing.errors import InputError

POLICY_VARIABLE = "PACING_KERNELS"
"""Environment variable choosing the kernels: auto, compiled or python [-]."""

POLICIES = ("auto", "compiled", "python")
"""The values PACING_KERNELS accepts [-]."""

COMPILED_WORK_THRESHOLD = 100_000
"""Work (pieces × calls) from which `auto` loads the compiled kernels [-]. Measured on the
project's 2-core machine (bench/bench_simulate.py prints both sides): importing numba and
loading the kernels from numba's cache takes 0.35-0.5 s in a fresh process (about 0.15 s of it
importing numba, the rest numba's first-use set-up), while plain Python rides a piece in
5.5-9 µs, so 50,000-90,000 pieces cost as much as the loading; 100,000 (a 1000 km course, or
25 simulations of a 40 km course) is the round number above that."""

KERNEL_MODULES = ("pacing.plan.simulate", "pacing.plan.steady_model",
                  "pacing.physics.cycling_speed")
"""Modules holding kernels; each has a `warm_up_kernels()` that runs its compiled kernels once
on a tiny case [-]."""

PARALLEL_LOCK = threading.Lock()
"""Held around every call of a parallel kernel: one at a time per process (numba's workqueue
threading layer must not be entered from two threads at once; the app serves sessions on
threads)."""

@contextlib.contextmanager
def parallel_turn() -> Iterator[bool]:
    """Take PARALLEL_LOCK unless another thread holds it; released on leaving.

    Yields whether this thread may run a parallel kernel now: a caller told False runs its
    serial path (numpy steps giving the same numbers), never waits for another session's long
    kernel (a Monte Carlo ride holds the lock for seconds).

    Yields
    ------
    bool
        True when the lock was taken [-].
    """
    taken = PARALLEL_LOCK.acquire(blocking=False)
    try:
        yield taken
    finally:
        if taken:
            PARALLEL_LOCK.release()


_SMALLEST_NORMAL = 2.2250738585072014e-308
"""The smallest positive normal float, DBL_MIN [-]."""

_families: dict[tuple[str, tuple[str, ...]], types.SimpleNamespace] = {}
_numba_importable: bool | None = None


def policy() -> str:
    """The kernel policy of PACING_KERNELS: "auto" (default), "compiled" or "python".

    Returns
    -------
    str
        The policy [-].

    Raises
    ------
    InputError
        When PACING_KERNELS holds another value.
    """
    value = os.environ.get(POLICY_VARIABLE, "auto").strip().lower() or "auto"
    if value not in POLICIES:
        raise InputError(f"{POLICY_VARIABLE} must be one of {', '.join(POLICIES)}, "
                         f"got {value!r}")
    return value


def numba_importable() -> bool:
    """Whether numba can be imported here (looked up once, without importing it).

    Returns
    -------
    bool
        True when numba is installed [-].
    """
    global _numba_importable
    if _numba_importable is None:
        _numba_importable = "numba" in sys.modules or (
            importlib.util.find_spec("numba") is not None)
    return _numba_importable


def loaded() -> bool:
    """Whether compiled kernels are already loaded in this process.

    Returns
    -------
    bool
        True once any family of kernels was built (by `compiled` or `warm_up`) [-].
    """
    return bool(_families)


def use_compiled(work: int) -> bool:
    """Whether a job of this size should run the compiled kernels.

    Parameters
    ----------
    work : int
        Size of the job, about the number of pieces times the number of calls [-].

    Returns
    -------
    bool
        True for the compiled kernels, False for plain Python [-].

    Raises
    ------
    InputError
        When PACING_KERNELS holds an unknown policy.
    """
    chosen = policy()
    if chosen == "python" or not numba_importable():
        return False
    return chosen == "compiled" or loaded() or work >= COMPILED_WORK_THRESHOLD


def compiled(namespace: Mapping[str, Any], names: Iterable[str], parallel: Iterable[str] = (),
             inline: Iterable[str] = ()) -> types.SimpleNamespace:
    """The compiled family of kernels `names` of a module, built on first need.

    Each function is copied with a shared globals dictionary (the module's globals, with every
    kernel name replaced by its dispatcher and `prange` by numba.prange) and wrapped in
    ``numba.njit(cache=True)``, so kernels calling each other call compiled code. The module's
    own functions stay plain Python. A global bound to math.hypot (``from math import hypot``)
    is replaced by `cpython_hypot` compiled: numba's math.hypot calls the C library, whose
    result differs from CPython's in the last bit for about 0.5 % of arguments, and a kernel
    that iterates to a tolerance turns that into differences of the tolerance's size; with the
    replacement the compiled kernels give the plain Python results bit for bit.

    Parameters
    ----------
    namespace : mapping
        The module's globals(): its kernels and the constants they read [-].
    names : iterable of str
        Names of the kernel functions of the family [-].
    parallel : iterable of str
        Names among `names` compiled with parallel=True (their `prange` loops run on every
        core) [-].
    inline : iterable of str
        Names among `names` inlined into their callers (numba's inline="always": small helpers
        called in inner loops) [-].

    Returns
    -------
    types.SimpleNamespace
        One attribute per name: the compiled dispatcher (the plain function when
        NUMBA_DISABLE_JIT=1) [-].
    """
    key = (str(namespace.get("__name__", "")), tuple(names))
    family = _families.get(key)
    if family is not None:
        return family
    import numba

    shared: dict[str, Any] = dict(namespace)
    shared["prange"] = numba.prange
    # set at import from NUMBA_DISABLE_JIT (numba's config has no static attributes)
    jit = not numba.config.DISABLE_JIT  # type: ignore[attr-defined]
    if key[0] == __name__:
        if jit:
            shared["_exact_product"], shared["_power_of_two_scale"] = _bit_level_helpers()
    elif jit:  # plain Python keeps CPython's own math.hypot
        exact = compiled(globals(), _HYPOT_KERNELS, inline=_HYPOT_INLINED).fused_hypot
        for name, value in namespace.items():
            if value is math.hypot:
                shared[name] = exact
    in_parallel, inlined = set(parallel), set(inline)
    built = {}
    for name in key[1]:
        function = namespace[name]
        copy = types.FunctionType(function.__code__, shared, function.__name__,
                                  function.__defaults__, function.__closure__)
        copy.__qualname__ = function.__qualname__
        copy.__module__ = function.__module__
        copy.__doc__ = function.__doc__
        built[name] = numba.njit(cache=True, parallel=name in in_parallel,
                                 inline="always" if name in inlined else "never")(copy)
    shared.update(built)
    family = types.SimpleNamespace(**built)
    _families[key] = family
    return family


def warm_up(modules: Iterable[str] = KERNEL_MODULES) -> float:
    """Load (from numba's cache) or compile every kernel now; the seconds it took.

    The app calls it once at start and shows the time: later calls do not pay it. Without
    numba, or with PACING_KERNELS=python, nothing is loaded.

    Parameters
    ----------
    modules : iterable of str
        Modules whose `warm_up_kernels()` to run (default: KERNEL_MODULES) [-].

    Returns
    -------
    float
        Wall time of importing numba and loading or compiling the kernels [s].
    """
    start = time.perf_counter()
    if policy() == "python" or not numba_importable():
        return time.perf_counter() - start
    for name in modules:
        warm: Callable[[], object] = importlib.import_module(name).warm_up_kernels
        warm()
    return time.perf_counter() - start


_HYPOT_KERNELS = ("fused_hypot", "cpython_hypot", "_power_of_two_scale", "_exact_product")
"""The kernels of the hypot the compiled kernels use, compiled together."""

_HYPOT_INLINED = ("fused_hypot", "_exact_product")
"""Those inlined into their callers (the rest serve the rare legs out of range)."""

_SQUARE_RANGE = (1e-150, 1e150)
"""Legs whose squares and their errors are normal floats: `fused_hypot` squares them itself
[-]."""


def fused_hypot(x: float, y: float) -> float:
    """√(x² + y²) correctly rounded, as CPython's math.hypot gives it, in fewer steps [-].

    For legs within _SQUARE_RANGE (or a zero second leg): the exact sum of squares as a
    double-double (error-free products and Fast2Sum), its rounded square root r and one
    correction r + (s − r²)/(2r) with the exact residual (Borges 2019, the fused variant).
    Both this and `cpython_hypot` (used outside that range) return the correctly rounded
    result but in cases rarer than either algorithm's tests found: it agreed with CPython's
    math.hypot bit for bit on 20 million random pairs spread over 1e-6 ... 1e6 and on every
    check of tests/test_kernels.py. Compiled (by `compiled`), it is about 3 times faster than
    `cpython_hypot` and faster than the C library's hypot.

    Parameters
    ----------
    x : float
        First leg [-].
    y : float
        Second leg [-].

    Returns
    -------
    float
        The hypotenuse [-].

    References
    ----------
    Borges, C.F. (2019). An improved algorithm for hypot(a, b). arXiv:1904.09481.

    Examples
    --------
    >>> fused_hypot(3.0, 4.0)
    5.0
    """
    x, y = abs(x), abs(y)
    if x < y:
        x, y = y, x
    low_end, high_end = _SQUARE_RANGE
    if not (low_end < x < high_end and (y == 0.0 or y > low_end)):  # also NaN and infinity
        return cpython_hypot(x, y)
    x_square, x_error = _exact_product(x, x)
    y_square, y_error = _exact_product(y, y)
    total = x_square + y_square
    low = x_error + y_error + ((x_square - total) + y_square)  # Fast2Sum: x² ≥ y²
    root = math.sqrt(total)
    high, rest = _exact_product(-root, root)
    residual = ((total + high) + rest) + low  # total − root² is exact (Sterbenz): one rounding
    return root + residual / (2.0 * root)


def cpython_hypot(x: float, y: float) -> float:
    """√(x² + y²) computed exactly as CPython's math.hypot does (bit for bit) [-].

    CPython's algorithm (Modules/mathmodule.c, vector_norm): scale by a power of two, square
    without error (Dekker 1971), sum with compensation (Neumaier) and correct the square root
    once (Borges 2019). Compiled, the kernels call it in place of the C library's hypot (see
    `compiled`), with the error-free products taken by a fused multiply-add (the same pairs as
    Dekker's split, faster).

    Parameters
    ----------
    x : float
        First leg [-].
    y : float
        Second leg [-].

    Returns
    -------
    float
        The hypotenuse, faithfully and almost always correctly rounded [-].

    References
    ----------
    Dekker, T.J. (1971). A floating-point technique for extending the available precision.
    Numer Math 18:224-242. doi:10.1007/BF01397083
    Borges, C.F. (2019). An improved algorithm for hypot(a, b). arXiv:1904.09481.

    Examples
    --------
    >>> cpython_hypot(3.0, 4.0)
    5.0
    """
    x, y = abs(x), abs(y)
    largest = x if x > y or y != y else y
    if largest == math.inf:
        return largest
    if x != x or y != y:
        return math.nan
    if largest == 0.0:
        return largest
    unscale = 1.0
    if largest < _SMALLEST_NORMAL:  # subnormal: make the legs normal first
        x, y, unscale = x / _SMALLEST_NORMAL, y / _SMALLEST_NORMAL, _SMALLEST_NORMAL
        largest = largest / _SMALLEST_NORMAL
    scale, inverse = _power_of_two_scale(largest)
    total, low_products, low_sums = 1.0, 0.0, 0.0
    high, low = _exact_product(x * scale, x * scale)
    summed = total + high
    low_sums += (total - summed) + high
    total = summed
    low_products += low
    high, low = _exact_product(y * scale, y * scale)
    summed = total + high
    low_sums += (total - summed) + high
    total = summed
    low_products += low
    root = math.sqrt(total - 1.0 + (low_products + low_sums))
    high, low = _exact_product(-root, root)
    summed = total + high
    low_sums += (total - summed) + high
    total = summed
    low_products += low
    residual = total - 1.0 + (low_products + low_sums)
    root += residual / (2.0 * root)
    if inverse == math.inf:  # 2**e overflows: only at the top of the float range
        return root / scale
    return unscale * (root * inverse)  # = root / scale: both are exact powers of two


def _power_of_two_scale(value: float) -> tuple[float, float]:
    """(2**-e, 2**e) for the exponent e of math.frexp(value): value·2**-e lies in [0.5, 1);
    2**e is infinite above the float range."""
    _, exponent = math.frexp(value)
    return math.ldexp(1.0, -exponent), math.ldexp(1.0, exponent) if exponent < 1024 else math.inf


def _exact_product(x: float, y: float) -> tuple[float, float]:
    """x·y as high + low without error (Dekker's mul12 with Veltkamp's split)."""
    t = x * 134217729.0
    x_high = t - (t - x)
    x_low = x - x_high
    t = y * 134217729.0
    y_high = t - (t - y)
    y_low = y - y_high
    p = x_high * y_high
    q = x_high * y_low + x_low * y_high
    z = p + q
    return z, p - z + q + x_low * y_low


def _bit_level_helpers() -> tuple[Any, Any]:
    """Compiled replacements of `_exact_product` (by a fused multiply-add: the same pair as
    Dekker's, faster) and `_power_of_two_scale` (from the exponent bits, frexp only near the
    ends of the float range), giving the same numbers."""
    import numba
    from llvmlite import ir
    from numba.core import types as numba_types
    from numba.extending import intrinsic

    double, integer = ir.DoubleType(), ir.IntType(64)

    @intrinsic
    def fused_multiply_add(typing_context: object, x: object, y: object,
                           z: object) -> tuple[object, Callable[..., object]]:
        def generate(context: object, builder: Any, signature: object,
                     arguments: list[object]) -> object:
            function = builder.module.declare_intrinsic(
                "llvm.fma", [double], ir.FunctionType(double, [double, double, double]))
            return builder.call(function, arguments)

        signature = numba_types.float64(numba_types.float64, numba_types.float64,
                                        numba_types.float64)
        return signature, generate

    @intrinsic
    def bits_of(typing_context: object, x: object) -> tuple[object, Callable[..., object]]:
        def generate(context: object, builder: Any, signature: object,
                     arguments: list[object]) -> object:
            return builder.bitcast(arguments[0], integer)

        return numba_types.int64(numba_types.float64), generate

    @intrinsic
    def float_of(typing_context: object, x: object) -> tuple[object, Callable[..., object]]:
        def generate(context: object, builder: Any, signature: object,
                     arguments: list[object]) -> object:
            return builder.bitcast(arguments[0], double)

        return numba_types.float64(numba_types.int64), generate

    # intrinsics are called without the typing context their definitions take first
    def fused_product(x: float, y: float) -> tuple[float, float]:
        high = x * y
        return high, fused_multiply_add(x, y, -high)  # type: ignore[call-arg]

    def scale_from_bits(value: float) -> tuple[float, float]:
        biased = (bits_of(value) >> 52) & 0x7FF  # type: ignore[call-arg]
        if 1 <= biased <= 2044:  # 2**-e and 2**e are normal numbers
            exponent = biased - 1022
            return float_of((1023 - exponent) << 52), float_of((1023 + exponent) << 52)
        _, exponent = math.frexp(value)
        return math.ldexp(1.0, -exponent), math.ldexp(1.0, exponent)  # compiled: inf, no error

    return (numba.njit(inline="always")(fused_product),
            numba.njit(inline="always")(scale_from_bits))
