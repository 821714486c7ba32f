import { CodeWriter, F64, I32, OP, type DefinedFunction } from "./emit";

/**
 * Sine and cosine as WebAssembly functions, so that a generated module does
 * not leave WebAssembly for the host's Math at every call (that crossing costs
 * more than the polynomial itself).
 *
 * The algorithm is fdlibm 5.3's (Sun Microsystems, freely distributed; the
 * routines __kernel_sin, __kernel_cos and the medium-size branch of
 * __ieee754_rem_pio2, with their published constants), which is also what the
 * JavaScript engines we target use for Math.sin and Math.cos; the unit tests
 * check that the results are bit-for-bit Math's on millions of arguments, so
 * the tape evaluator and the module still agree to the last bit. Arguments of
 * magnitude above 2¹⁹·π/2 (about 8.2e5), where fdlibm switches to its
 * many-word reduction, and non-finite ones go to the host's function.
 */

// __kernel_sin: sin on [−π/4, π/4].
const S1 = -1.66666666666666324348e-1;
const S2 = 8.33333333332248946124e-3;
const S3 = -1.98412698298579493134e-4;
const S4 = 2.75573137070700676789e-6;
const S5 = -2.50507602534068634195e-8;
const S6 = 1.58969099521155010221e-10;
// __kernel_cos: cos on [−π/4, π/4].
const C1 = 4.16666666666666019037e-2;
const C2 = -1.38888888888741095749e-3;
const C3 = 2.48015872894767294178e-5;
const C4 = -2.75573143513906633035e-7;
const C5 = 2.0875723212981748279e-9;
const C6 = -1.13596475577881948265e-11;
// __ieee754_rem_pio2: π/2 in three pieces of 33 bits and their tails.
const INV_PIO2 = 6.36619772367581382433e-1;
const PIO2_1 = 1.57079632673412561417;
const PIO2_1T = 6.07710050650619224932e-11;
const PIO2_2 = 6.0771005063039659766e-11;
const PIO2_2T = 2.02226624879595063154e-21;
const PIO2_3 = 2.0222662487111664558e-21;
const PIO2_3T = 8.47842766036889956997e-32;

/** Type indices the caller's module declares: (f64) → f64, (f64, f64) → f64, (f64, f64, i32) → f64, (f64) → (f64, f64). */
export interface TrigTypes {
  unary: number;
  binary: number;
  kernelSin: number;
  pair: number;
}

export interface TrigFunctions {
  functions: DefinedFunction[];
  /** Function index of the native sine / cosine, when asked for. */
  sin?: number;
  cos?: number;
  /** Both at once (one reduction; returns sine then cosine), when both are asked for. */
  sincos?: number;
}

/**
 * The functions, to be placed at indices first, first + 1, … of the module;
 * `fallback` gives the import index of the host's sin and cos for the ones wanted.
 */
export function emitTrigFunctions(first: number, fallback: { sin?: number; cos?: number }, types: TrigTypes): TrigFunctions {
  const KSIN = first;
  const KCOS = first + 1;
  const functions: DefinedFunction[] = [
    { type: types.kernelSin, locals: [...f64s(3), { count: 1, type: I32 }], code: kernelSin() },
    { type: types.binary, locals: [...f64s(5), { count: 1, type: I32 }], code: kernelCos() },
  ];
  const result: TrigFunctions = { functions };
  for (const which of ["sin", "cos"] as const) {
    const host = fallback[which];
    if (host === undefined) continue;
    result[which] = first + functions.length;
    functions.push({ type: types.unary, locals: [...f64s(7), { count: 5, type: I32 }], code: sineOrCosine(which, { sin: host, cos: host }, KSIN, KCOS) });
  }
  if (fallback.sin !== undefined && fallback.cos !== undefined) {
    result.sincos = first + functions.length;
    functions.push({
      type: types.pair,
      locals: [...f64s(7), { count: 5, type: I32 }],
      code: sineOrCosine("sincos", { sin: fallback.sin, cos: fallback.cos }, KSIN, KCOS),
    });
  }
  return result;
}

function f64s(count: number) {
  return [{ count, type: F64 }];
}

/** Pushes the high 32 bits of the f64 in `local` as an i32. */
function highWord(c: CodeWriter, local: number): CodeWriter {
  c.get(local).op(OP.i64ReinterpretF64);
  c.op(OP.i64Const).w.i32(32); // i64.const takes a signed LEB128 like i32 for small values
  return c.op(OP.i64ShrU).op(OP.i32WrapI64);
}

/** __kernel_sin(x, y, iy): params x = 0, y = 1, iy = 2 (i32); locals z = 3, v = 4, r = 5, ix = 6 (i32). */
function kernelSin(): Uint8Array {
  const [X, Y, IY, Z, V, R, IX] = [0, 1, 2, 3, 4, 5, 6];
  const c = new CodeWriter();
  highWord(c, X).i32(0x7fffffff).op(OP.i32And).set(IX);
  // |x| < 2⁻²⁷: sin x = x.
  c.get(IX).i32(0x3e400000).op(OP.i32LtS);
  c.ifNonZero(() => c.get(X).op(OP.return));
  c.get(X).get(X).op(OP.f64Mul).set(Z);
  c.get(Z).get(X).op(OP.f64Mul).set(V);
  // r = S2 + z(S3 + z(S4 + z(S5 + z S6)))
  c.f64(S2).get(Z).f64(S3).get(Z).f64(S4).get(Z).f64(S5).get(Z).f64(S6);
  c.op(OP.f64Mul).op(OP.f64Add).op(OP.f64Mul).op(OP.f64Add).op(OP.f64Mul).op(OP.f64Add).op(OP.f64Mul).op(OP.f64Add).set(R);
  c.get(IY).op(OP.i32Eqz);
  // iy = 0: x + v(S1 + z r)
  c.ifNonZero(() => c.get(X).get(V).f64(S1).get(Z).get(R).op(OP.f64Mul).op(OP.f64Add).op(OP.f64Mul).op(OP.f64Add).op(OP.return));
  // x − ((z(y/2 − v r) − y) − v S1)
  c.get(X);
  c.get(Z).f64(0.5).get(Y).op(OP.f64Mul).get(V).get(R).op(OP.f64Mul).op(OP.f64Sub).op(OP.f64Mul);
  c.get(Y).op(OP.f64Sub);
  c.get(V).f64(S1).op(OP.f64Mul).op(OP.f64Sub);
  c.op(OP.f64Sub);
  return c.bytes();
}

/** __kernel_cos(x, y): params x = 0, y = 1; locals z = 2, r = 3, qx = 4, hz = 5, a = 6, ix = 7 (i32). */
function kernelCos(): Uint8Array {
  const [X, Y, Z, R, QX, HZ, A, IX] = [0, 1, 2, 3, 4, 5, 6, 7];
  const c = new CodeWriter();
  highWord(c, X).i32(0x7fffffff).op(OP.i32And).set(IX);
  c.get(IX).i32(0x3e400000).op(OP.i32LtS);
  c.ifNonZero(() => c.f64(1).op(OP.return));
  c.get(X).get(X).op(OP.f64Mul).set(Z);
  // r = z(C1 + z(C2 + z(C3 + z(C4 + z(C5 + z C6)))))
  c.get(Z).f64(C1).get(Z).f64(C2).get(Z).f64(C3).get(Z).f64(C4).get(Z).f64(C5).get(Z).f64(C6);
  c.op(OP.f64Mul).op(OP.f64Add).op(OP.f64Mul).op(OP.f64Add).op(OP.f64Mul).op(OP.f64Add).op(OP.f64Mul).op(OP.f64Add).op(OP.f64Mul).op(OP.f64Add);
  c.op(OP.f64Mul).set(R);
  const zrMinusXy = () => c.get(Z).get(R).op(OP.f64Mul).get(X).get(Y).op(OP.f64Mul).op(OP.f64Sub);
  // |x| < 0.3: 1 − (z/2 − (z r − x y))
  c.get(IX).i32(0x3fd33333).op(OP.i32LtS);
  c.ifNonZero(() => {
    c.f64(1).f64(0.5).get(Z).op(OP.f64Mul);
    zrMinusXy();
    c.op(OP.f64Sub).op(OP.f64Sub).op(OP.return);
  });
  // qx = 0.28125 above 0.78125, else |x|/4 with the low word cleared.
  c.get(IX).i32(0x3fe90000).op(OP.i32GtS);
  c.ifNonZero(
    () => c.f64(0.28125).set(QX),
    () => {
      c.get(IX).i32(0x00200000).op(OP.i32Sub).op(OP.i64ExtendI32U);
      c.op(OP.i64Const).w.i32(32);
      c.op(OP.i64Shl).op(OP.f64ReinterpretI64).set(QX);
    },
  );
  c.f64(0.5).get(Z).op(OP.f64Mul).get(QX).op(OP.f64Sub).set(HZ);
  c.f64(1).get(QX).op(OP.f64Sub).set(A);
  // a − (hz − (z r − x y))
  c.get(A).get(HZ);
  zrMinusXy();
  c.op(OP.f64Sub).op(OP.f64Sub);
  return c.bytes();
}

/**
 * sin(x), cos(x), or both (sine, then cosine, from one reduction: the same
 * values as the two separately): param x = 0; f64 locals z = 1, t = 2, r = 3,
 * w = 4, fn = 5, y0 = 6, y1 = 7; i32 locals hx = 8, ix = 9, n = 10, j = 11, i = 12.
 */
function sineOrCosine(which: "sin" | "cos" | "sincos", host: { sin: number; cos: number }, ksin: number, kcos: number): Uint8Array {
  const [X, Z, T, R, W, FN, Y0, Y1, HX, IX, N, J, I] = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12];
  const c = new CodeWriter();
  highWord(c, X).tee(HX).i32(0x7fffffff).op(OP.i32And).set(IX);
  // |x| ≤ π/4: the kernel directly.
  c.get(IX).i32(0x3fe921fb).op(OP.i32LeS);
  c.ifNonZero(() => {
    if (which !== "cos") c.get(X).f64(0).i32(0).call(ksin);
    if (which !== "sin") c.get(X).f64(0).call(kcos);
    c.op(OP.return);
  });
  // NaN or ±∞ (x − x is NaN), and large arguments: the host's function.
  c.get(IX).i32(0x413921fb).op(OP.i32GtS);
  c.ifNonZero(() => {
    if (which !== "cos") c.get(X).call(host.sin);
    if (which !== "sin") c.get(X).call(host.cos);
    c.op(OP.return);
  });
  // x = n·π/2 + (y0 + y1).
  c.get(IX).i32(0x4002d97c).op(OP.i32LtS);
  c.ifNonZero(
    () => {
      // |x| < 3π/4: n = ±1.
      const nearHalfPi = () => c.get(IX).i32(0x3ff921fb).op(OP.i32Ne);
      c.get(HX).i32(0).op(OP.i32GtS);
      c.ifNonZero(
        () => {
          c.get(X).f64(PIO2_1).op(OP.f64Sub).set(Z);
          nearHalfPi();
          c.ifNonZero(
            () => {
              c.get(Z).f64(PIO2_1T).op(OP.f64Sub).set(Y0);
              c.get(Z).get(Y0).op(OP.f64Sub).f64(PIO2_1T).op(OP.f64Sub).set(Y1);
            },
            () => {
              c.get(Z).f64(PIO2_2).op(OP.f64Sub).set(Z);
              c.get(Z).f64(PIO2_2T).op(OP.f64Sub).set(Y0);
              c.get(Z).get(Y0).op(OP.f64Sub).f64(PIO2_2T).op(OP.f64Sub).set(Y1);
            },
          );
          c.i32(1).set(N);
        },
        () => {
          c.get(X).f64(PIO2_1).op(OP.f64Add).set(Z);
          nearHalfPi();
          c.ifNonZero(
            () => {
              c.get(Z).f64(PIO2_1T).op(OP.f64Add).set(Y0);
              c.get(Z).get(Y0).op(OP.f64Sub).f64(PIO2_1T).op(OP.f64Add).set(Y1);
            },
            () => {
              c.get(Z).f64(PIO2_2).op(OP.f64Add).set(Z);
              c.get(Z).f64(PIO2_2T).op(OP.f64Add).set(Y0);
              c.get(Z).get(Y0).op(OP.f64Sub).f64(PIO2_2T).op(OP.f64Add).set(Y1);
            },
          );
          c.i32(-1).set(N);
        },
      );
    },
    () => {
      // Medium arguments: Cody–Waite reduction in up to three rounds.
      c.get(X).op(OP.f64Abs).set(T);
      c.get(T).f64(INV_PIO2).op(OP.f64Mul).f64(0.5).op(OP.f64Add).op(OP.i32TruncF64S).tee(N);
      c.op(OP.f64ConvertI32S).set(FN);
      c.get(T).get(FN).f64(PIO2_1).op(OP.f64Mul).op(OP.f64Sub).set(R);
      c.get(FN).f64(PIO2_1T).op(OP.f64Mul).set(W);
      c.get(IX).i32(20).op(OP.i32ShrS).set(J);
      const exponentDrop = () => {
        c.get(R).get(W).op(OP.f64Sub).set(Y0);
        c.get(J);
        highWord(c, Y0).i32(20).op(OP.i32ShrS).i32(0x7ff).op(OP.i32And);
        c.op(OP.i32Sub).set(I);
      };
      const round = (piece: number, tail: number) => {
        c.get(R).set(T);
        c.get(FN).f64(piece).op(OP.f64Mul).set(W);
        c.get(T).get(W).op(OP.f64Sub).set(R);
        c.get(FN).f64(tail).op(OP.f64Mul);
        c.get(T).get(R).op(OP.f64Sub).get(W).op(OP.f64Sub);
        c.op(OP.f64Sub).set(W);
      };
      exponentDrop();
      c.get(I).i32(16).op(OP.i32GtS);
      c.ifNonZero(() => {
        round(PIO2_2, PIO2_2T);
        exponentDrop();
        c.get(I).i32(49).op(OP.i32GtS);
        c.ifNonZero(() => {
          round(PIO2_3, PIO2_3T);
          c.get(R).get(W).op(OP.f64Sub).set(Y0);
        });
      });
      c.get(R).get(Y0).op(OP.f64Sub).get(W).op(OP.f64Sub).set(Y1);
      c.get(HX).i32(0).op(OP.i32LtS);
      c.ifNonZero(() => {
        c.get(Y0).op(OP.f64Neg).set(Y0);
        c.get(Y1).op(OP.f64Neg).set(Y1);
        c.i32(0).get(N).op(OP.i32Sub).set(N);
      });
    },
  );
  // The quadrant n mod 4 picks ±sin or ±cos of the remainder.
  const kSin = () => c.get(Y0).get(Y1).i32(1).call(ksin);
  const kCos = () => c.get(Y0).get(Y1).call(kcos);
  const quadrant = (q: number) => c.get(N).i32(3).op(OP.i32And).i32(q).op(OP.i32Eq);
  const minusSin = () => {
    kSin();
    c.op(OP.f64Neg);
  };
  const minusCos = () => {
    kCos();
    c.op(OP.f64Neg);
  };
  const sines = [kSin, kCos, minusSin, minusCos];
  const cosines = [kCos, minusSin, minusCos, kSin];
  const answers = sines.map((sine, q) => () => {
    if (which !== "cos") sine();
    if (which !== "sin") cosines[q]!();
  });
  for (let q = 0; q < 3; q++) {
    quadrant(q);
    c.ifNonZero(() => {
      answers[q]!();
      c.op(OP.return);
    });
  }
  answers[3]!();
  return c.bytes();
}
