"""float32 → half-float pixels on the processor's own conversion instruction.

Knows nothing of physics, synthesis or files: a float32 image in, 16-bit half-float bits out.

numpy (2.x) converts float32 to float16 one value at a time in software: 1.6 ms for a
million values here, about 12 ms of CPU for the seven half channels of every 1024² frame
a render writes. LLVM's ``fptrunc`` to ``half`` compiles to the F16C instruction
``vcvtps2ph`` on x86-64 (``fcvt`` on 64-bit ARM), eight values at a time: 0.07 ms a
million contiguous, 0.22 ms strided (a render's maps are views into its frame buffer).
Both are IEEE 754 binary16 with round-to-nearest-even, overflow to infinity and
subnormals kept; the kernel was checked against numpy on all 2³² float32 bit patterns
(every non-NaN result the same bits, NaN kept NaN), and the tests hold it to numpy on
every half's rounding boundaries and on random patterns.

Importing this module compiles the kernel, or loads it from numba's disk cache: import it
only when converting (``io.exr.to_pixels`` does, and falls back to numpy if it cannot).
"""

from __future__ import annotations

import numba
import numpy as np
from llvmlite import ir
from numba import types
from numba.extending import intrinsic

__all__ = ["convert"]


@intrinsic
def _half_bits(typingctx, x):  # pragma: no cover - compiled
    """The binary16 bits of a float32, rounded to nearest even (LLVM fptrunc)."""
    if x != types.float32:
        return None

    def codegen(context, builder, signature, args):
        return builder.bitcast(builder.fptrunc(args[0], ir.HalfType()), ir.IntType(16))

    return types.uint16(types.float32), codegen


#: Any 2-D float32 image, read-only (``to_pixels`` hands over a read-only view: one
#: signature, where a writable one as well would make every writable array ambiguous).
_SIGNATURE = types.uint16(types.Array(types.float32, 2, "A", readonly=True), types.float32, types.uint16,
                          types.Array(types.uint16, 2, "C"))


@numba.njit([_SIGNATURE], cache=True, nogil=True)
def convert(src, divisor, sign, out):  # pragma: no cover - compiled
    """``out = half(src / divisor) ^ sign`` for a read-only 2-D float32 ``src`` (any strides) into a
    C-contiguous uint16 ``out`` of its shape: the division in float32, ``sign`` 0 or 0x8000
    (the flipped sign bit is the half of −x: rounding to nearest even is symmetric).
    Returns the largest ``bits & 0x7FFF`` written: from 0x7C00 on, an infinity or NaN."""
    worst = np.uint16(0)
    if divisor == 1.0:  # x / 1 is x: the loop without the division is a third faster
        for row in range(src.shape[0]):
            for column in range(src.shape[1]):
                bits = _half_bits(src[row, column]) ^ sign
                out[row, column] = bits
                worst = max(worst, bits & np.uint16(0x7FFF))
        return worst
    for row in range(src.shape[0]):
        for column in range(src.shape[1]):
            bits = _half_bits(src[row, column] / divisor) ^ sign
            out[row, column] = bits
            worst = max(worst, bits & np.uint16(0x7FFF))
    return worst
