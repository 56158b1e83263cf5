/**
 * Small dense linear-algebra kernels over Float64Array for the least-squares fitter.
 *
 * Matrices are row-major: element (i, j) of an r x c matrix A sits at A[i * c + j], except
 * where a function says column-major (element (i, j) at A[j * r + i]).
 * The fitter works with the normal equations of a tall Jacobian J (m x n, m >= n, n of a few
 * tens at most), so the kernels here are: the Gram matrix J^T J and the gradient J^T r (from
 * row-major or column-major J), the Cholesky factorisation of a symmetric positive-definite
 * matrix with triangular solves, and the inverse of such a matrix. Algorithms: Golub and Van
 * Loan, Matrix Computations, 4th ed. (2013), Alg. 4.2.1 (Cholesky, gaxpy form) and section 3.1
 * (triangular solves) (numbers from memory).
 *
 * Hand-written rather than built on ml-matrix because the fitter calls these on 30 x 30
 * matrices many times per fit, where object allocation and bounds checks dominate (see the
 * B1 benchmark profile). The Gram matrix, the largest cost of the fitter itself, has a
 * WebAssembly SIMD kernel (assembled below from its bytes) with a scalar fallback. All
 * functions write into caller-supplied buffers; apart from the inverse (which returns a new
 * matrix) only the row-major gramMatrix without scratch allocates, and the SIMD kernel keeps
 * one module-private scratch memory that grows to the largest Jacobian seen.
 */

/**
 * G = J^T J (full symmetric n x n) of a row-major Jacobian, and optionally g = J^T v.
 *
 * J is first copied into column-major scratch (`columns`, length m * n, allocated when absent),
 * then {@link gramMatrixOfColumns} does the work.
 *
 * @param jac row-major m x n Jacobian.
 * @param m rows (residuals), n columns (parameters).
 * @param gram output n x n, overwritten.
 * @param columns optional scratch of length >= m * n, overwritten.
 * @param vector optional v (length m): when given with `gradient`, also g = J^T v (length n).
 */
export function gramMatrix(
  jac: Float64Array,
  m: number,
  n: number,
  gram: Float64Array,
  columns?: Float64Array,
  vector?: Float64Array,
  gradient?: Float64Array,
): void {
  const t = columns ?? new Float64Array(m * n);
  transposeInto(jac, m, n, t);
  gramMatrixOfColumns(t, m, n, gram, vector, gradient);
}

/**
 * Transpose: `out` (c x r) = `a` (r x c), both row-major; equivalently, the column-major copy of
 * a row-major matrix. `out` must not overlap `a`.
 */
export function transposeInto(a: Float64Array, r: number, c: number, out: Float64Array): void {
  for (let i = 0; i < r; i++) {
    const row = i * c;
    for (let j = 0; j < c; j++) out[j * r + i] = a[row + j];
  }
}

// ---------------------------------------------------------------------------------------------
// J^T J by a WebAssembly SIMD kernel.
//
// JavaScript has no vector instructions, and V8 surrounds every typed-array load of the scalar
// kernel with a map check, a bounds check and an overflow-checked index addition (about six
// instructions per load; read from V8's optimised code for the B1 benchmark, where the Gram
// matrix was a third of a P = 32 fit). WebAssembly's 128-bit SIMD (two doubles per instruction;
// in Node since version 16, from memory) runs the same blocked dot products without those
// checks. The module is assembled here from its bytes (binary format of the WebAssembly Core
// Specification, version 2.0, W3C, chapter 5 "Binary Format"; opcode values checked by
// WebAssembly.validate and by the results): one exported function gram(t, m, np, g) for a
// column-major copy t of J (np columns of m doubles, the columns past n zero, np a multiple of
// 4, m >= 2) writing the np x np matrix g (t and g are byte addresses in the module's memory), in
// blocks of 2 x 4 columns, two rows per instruction (and the last row alone when m is odd).
// The block shape was chosen by timing 1x4, 2x2, 2x4, 4x2, 3x2, 4x4 and 2x8 on 221 x 35: 2x4
// and 4x2 15.6 us, 2x2 18.4 us, 4x4 21.6 us (register spills).
// The scratch memory belongs to this module and is used only inside one synchronous call (copy
// in, compute, copy out): nothing one call leaves there is read by the next, so the function
// stays pure (the memory only keeps its size, that of the largest Jacobian seen). Rounding differs
// from the scalar kernel only in the order of the additions.

/** Unsigned LEB128 of a non-negative integer (WebAssembly Core Spec. 5.2.2, section number from memory). */
function leb128(value: number): number[] {
  const out: number[] = [];
  let v = value;
  do {
    let byte = v & 0x7f;
    v = Math.floor(v / 128);
    if (v !== 0) byte |= 0x80;
    out.push(byte);
  } while (v !== 0);
  return out;
}

/** Bytes of the Gram module for blocks of `rowsPerBlock` x `colsPerBlock` columns. */
function gramModuleBytes(rowsPerBlock: number, colsPerBlock: number): Uint8Array {
  const I32 = 0x7f;
  const F64 = 0x7c;
  const V128 = 0x7b;
  // Opcodes (Core Spec. 5.4).
  const LOOP = 0x03;
  const BR_IF = 0x0d;
  const END = 0x0b;
  const LOCAL_GET = 0x20;
  const LOCAL_SET = 0x21;
  const LOCAL_TEE = 0x22;
  const I32_CONST = 0x41;
  const I32_LT_U = 0x49;
  const I32_ADD = 0x6a;
  const I32_SUB = 0x6b;
  const I32_MUL = 0x6c;
  const I32_AND = 0x71;
  const I32_SHL = 0x74;
  const F64_LOAD = 0x2b;
  const F64_STORE = 0x39;
  const F64_ADD = 0xa0;
  const F64_MUL = 0xa2;
  const F64_CONVERT_I32_U = 0xb8;
  const SIMD = 0xfd;
  const V128_LOAD = 0x00;
  const V128_CONST = 0x0c;
  const F64X2_EXTRACT_LANE = 0x21;
  const F64X2_ADD = 0xf0;
  const F64X2_MUL = 0xf2;
  const simd = (op: number) => [SIMD, ...leb128(op)];
  const i32 = (v: number) => [I32_CONST, ...leb128(v)]; // small non-negative constants only (< 64)
  // Locals: parameters 0 t, 1 m, 2 np, 3 g; i32 a, b, i, end, last, column pointers; v128
  // vectors and accumulators; f64 tail flag and the last row's entries.
  const [T, M, NP, G, A, B, I, END_I, LAST] = [0, 1, 2, 3, 4, 5, 6, 7, 8];
  const ra = rowsPerBlock;
  const cb = colsPerBlock;
  const ptrA = (r: number) => 9 + r;
  const ptrB = (c: number) => 9 + ra + c;
  const nI32 = 5 + ra + cb;
  const vecA = (r: number) => 4 + nI32 + r;
  const vecB = (c: number) => 4 + nI32 + ra + c;
  const acc = (r: number, c: number) => 4 + nI32 + ra + cb + r * cb + c;
  const nV128 = ra + cb + ra * cb;
  const TAIL = 4 + nI32 + nV128;
  const tailA = (r: number) => TAIL + 1 + r;
  const tailB = (c: number) => TAIL + 1 + ra + c;
  const nF64 = 1 + ra + cb;
  const get = (l: number) => [LOCAL_GET, ...leb128(l)];
  const set = (l: number) => [LOCAL_SET, ...leb128(l)];
  // Byte address of column `col` + `plus`: t + (col + plus) * m * 8.
  const column = (col: number, plus: number) => [...get(T), ...get(col), ...i32(plus), I32_ADD, ...get(M), I32_MUL, ...i32(3), I32_SHL, I32_ADD];
  const body: number[] = [];
  const emit = (...bytes: number[]) => body.push(...bytes);
  // end = (m rounded down to even) * 8 bytes; last = (m - 1) * 8; tail = m odd ? 1 : 0.
  emit(...get(M), ...i32(1), I32_AND, F64_CONVERT_I32_U, ...set(TAIL));
  emit(...get(M), ...get(M), ...i32(1), I32_AND, I32_SUB, ...i32(3), I32_SHL, ...set(END_I));
  emit(...get(M), ...i32(1), I32_SUB, ...i32(3), I32_SHL, ...set(LAST));
  emit(...i32(0), ...set(A));
  emit(LOOP, 0x40);
  // b starts at the multiple of cb at or below a.
  emit(...get(A), ...get(A), ...i32(cb - 1), I32_AND, I32_SUB, ...set(B));
  emit(LOOP, 0x40);
  for (let r = 0; r < ra; r++) emit(...column(A, r), ...set(ptrA(r)));
  for (let c = 0; c < cb; c++) emit(...column(B, c), ...set(ptrB(c)));
  for (let r = 0; r < ra; r++) for (let c = 0; c < cb; c++) emit(...simd(V128_CONST), ...new Array(16).fill(0), ...set(acc(r, c)));
  emit(...i32(0), ...set(I));
  emit(LOOP, 0x40);
  for (let r = 0; r < ra; r++) emit(...get(ptrA(r)), ...get(I), I32_ADD, ...simd(V128_LOAD), 3, 0, ...set(vecA(r)));
  for (let c = 0; c < cb; c++) emit(...get(ptrB(c)), ...get(I), I32_ADD, ...simd(V128_LOAD), 3, 0, ...set(vecB(c)));
  for (let r = 0; r < ra; r++) {
    for (let c = 0; c < cb; c++) {
      emit(...get(acc(r, c)), ...get(vecA(r)), ...get(vecB(c)), ...simd(F64X2_MUL), ...simd(F64X2_ADD), ...set(acc(r, c)));
    }
  }
  emit(...get(I), ...i32(16), I32_ADD, LOCAL_TEE, ...leb128(I), ...get(END_I), I32_LT_U, BR_IF, 0, END);
  // The last row (counted once more, times 0, when m is even).
  for (let r = 0; r < ra; r++) emit(...get(ptrA(r)), ...get(LAST), I32_ADD, F64_LOAD, 3, 0, ...get(TAIL), F64_MUL, ...set(tailA(r)));
  for (let c = 0; c < cb; c++) emit(...get(ptrB(c)), ...get(LAST), I32_ADD, F64_LOAD, 3, 0, ...set(tailB(c)));
  // g[(a + r) np + b + c] = lane 0 + lane 1 + tail.
  for (let r = 0; r < ra; r++) {
    for (let c = 0; c < cb; c++) {
      emit(...get(G), ...get(A), ...i32(r), I32_ADD, ...get(NP), I32_MUL, ...get(B), I32_ADD, ...i32(c), I32_ADD, ...i32(3), I32_SHL, I32_ADD);
      emit(...get(acc(r, c)), ...simd(F64X2_EXTRACT_LANE), 0, ...get(acc(r, c)), ...simd(F64X2_EXTRACT_LANE), 1, F64_ADD);
      emit(...get(tailA(r)), ...get(tailB(c)), F64_MUL, F64_ADD, F64_STORE, 3, 0);
    }
  }
  emit(...get(B), ...i32(cb), I32_ADD, LOCAL_TEE, ...leb128(B), ...get(NP), I32_LT_U, BR_IF, 0, END);
  emit(...get(A), ...i32(ra), I32_ADD, LOCAL_TEE, ...leb128(A), ...get(NP), I32_LT_U, BR_IF, 0, END);
  emit(END);
  const code = [3, ...leb128(nI32), I32, ...leb128(nV128), V128, ...leb128(nF64), F64, ...body];
  const section = (id: number, bytes: number[]) => [id, ...leb128(bytes.length), ...bytes];
  const name = (s: string) => [s.length, ...Array.from(s, (ch) => ch.charCodeAt(0))];
  return new Uint8Array([
    0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00, // magic, version 1
    ...section(1, [1, 0x60, 4, I32, I32, I32, I32, 0]), // type: (i32 x 4) -> ()
    ...section(2, [1, ...name('env'), ...name('memory'), 0x02, 0x00, 1]), // import env.memory, min 1 page
    ...section(3, [1, 0]), // function 0 has type 0
    ...section(7, [1, ...name('gram'), 0x00, 0]), // export "gram" = function 0
    ...section(10, [1, ...leb128(code.length), ...code]), // code
  ]);
}

/** The kernel's block shape (rows x columns of the Gram matrix); both divide GRAM_PAD. */
const GRAM_BLOCK_ROWS = 2;
const GRAM_BLOCK_COLS = 4;
const GRAM_PAD = 4;
/** Below this many multiply-adds (m n^2 / 2) the call and the copies cost more than the kernel saves (measured: at 221 x 7, 5400 multiply-adds, SIMD 5 us, scalar 6.5 us). */
const GRAM_WASM_MIN_WORK = 2000;

/** The part of the WebAssembly JavaScript API used here (the project's type libraries omit it). */
interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
interface WasmApi {
  validate(bytes: Uint8Array): boolean;
  Memory: new (descriptor: { initial: number }) => WasmMemory;
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: object) => { exports: Record<string, unknown> };
}

interface GramKernel {
  memory: WasmMemory;
  gram: (t: number, m: number, np: number, g: number) => void;
}

/** The compiled kernel, or null where WebAssembly SIMD is unavailable. Built on first use. */
let gramKernel: GramKernel | null | undefined;

function getGramKernel(): GramKernel | null {
  if (gramKernel !== undefined) return gramKernel;
  gramKernel = null;
  const wasm = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;
  try {
    const bytes = gramModuleBytes(GRAM_BLOCK_ROWS, GRAM_BLOCK_COLS);
    if (wasm && wasm.validate(bytes)) {
      const memory = new wasm.Memory({ initial: 1 });
      const instance = new wasm.Instance(new wasm.Module(bytes), { env: { memory } });
      gramKernel = { memory, gram: instance.exports.gram as GramKernel['gram'] };
    }
  } catch {
    gramKernel = null;
  }
  return gramKernel;
}

/**
 * Upper triangle of J^T J by the SIMD kernel into `gram`, and J^T v into `gradient` when both
 * are given (v rides along as column n, so that row n of the kernel's result is v^T J); false
 * (nothing written) when the kernel is unavailable or the problem too small to profit.
 */
function gramUpperBySimd(
  t: Float64Array,
  m: number,
  n: number,
  gram: Float64Array,
  vector?: Float64Array,
  gradient?: Float64Array,
): boolean {
  if (m < 2 || (m * n * n) / 2 < GRAM_WASM_MIN_WORK) return false;
  const kernel = getGramKernel();
  if (!kernel) return false;
  const withVector = vector !== undefined && gradient !== undefined;
  const columns = withVector ? n + 1 : n;
  const np = Math.ceil(columns / GRAM_PAD) * GRAM_PAD;
  const gOffset = m * np; // in doubles
  const bytes = (gOffset + np * np) * 8;
  const have = kernel.memory.buffer.byteLength;
  if (have < bytes) {
    try {
      kernel.memory.grow(Math.ceil((bytes - have) / 65536));
    } catch {
      return false; // beyond what the engine grants a module's memory: the scalar kernel copes
    }
  }
  const heap = new Float64Array(kernel.memory.buffer, 0, gOffset + np * np);
  heap.set(t.length === m * n ? t : t.subarray(0, m * n));
  if (withVector) heap.set(vector.length === m ? vector : vector.subarray(0, m), m * n);
  heap.fill(0, m * columns, gOffset);
  kernel.gram(0, m, np, gOffset * 8);
  for (let a = 0; a < n; a++) {
    const src = gOffset + a * np;
    const dst = a * n;
    for (let b = a; b < n; b++) gram[dst + b] = heap[src + b];
    if (withVector) gradient[a] = heap[src + n];
  }
  return true;
}

/**
 * Upper triangle (and some entries below it) of J^T J, column-major J, scalar code: blocks of
 * 3 x 2 (three columns a against two columns b: six accumulators, five loads per row, all in
 * registers), two rows per pass. The upper triangle is covered by blocks whose b range starts at
 * the even column at or below a; entries of those blocks below the diagonal, and entries computed
 * twice where the blocks are clamped at the last column (same sums, same order), are overwritten
 * by the caller's mirror. The block shape was chosen by timing 2x2, 2x2 unrolled by 4, 3x2
 * unrolled by 2, 3x3, 4x2 column blocks and rank-4/6/8 row updates on a 221 x 35 Jacobian (the B1
 * benchmark): 3x2 was about 7 % faster than the 3x3 blocks used before.
 */
function gramUpperScalar(t: Float64Array, m: number, n: number, gram: Float64Array): void {
  const mEven = m - (m % 2);
  const last = n - 1;
  for (let a = 0; a < n; a += 3) {
    const a1 = a + 1 < n ? a + 1 : last;
    const a2 = a + 2 < n ? a + 2 : last;
    const c0 = a * m;
    const c1 = a1 * m;
    const c2 = a2 * m;
    for (let b = a - (a % 2); b < n; b += 2) {
      const b1 = b + 1 < n ? b + 1 : last;
      const d0 = b * m;
      const d1 = b1 * m;
      let p00 = 0;
      let p01 = 0;
      let p10 = 0;
      let p11 = 0;
      let p20 = 0;
      let p21 = 0;
      let i = 0;
      for (; i < mEven; i += 2) {
        let u = t[d0 + i];
        let v = t[d1 + i];
        let x = t[c0 + i];
        p00 += x * u;
        p01 += x * v;
        x = t[c1 + i];
        p10 += x * u;
        p11 += x * v;
        x = t[c2 + i];
        p20 += x * u;
        p21 += x * v;
        u = t[d0 + i + 1];
        v = t[d1 + i + 1];
        x = t[c0 + i + 1];
        p00 += x * u;
        p01 += x * v;
        x = t[c1 + i + 1];
        p10 += x * u;
        p11 += x * v;
        x = t[c2 + i + 1];
        p20 += x * u;
        p21 += x * v;
      }
      if (i < m) {
        const u = t[d0 + i];
        const v = t[d1 + i];
        let x = t[c0 + i];
        p00 += x * u;
        p01 += x * v;
        x = t[c1 + i];
        p10 += x * u;
        p11 += x * v;
        x = t[c2 + i];
        p20 += x * u;
        p21 += x * v;
      }
      gram[a * n + b] = p00;
      gram[a * n + b1] = p01;
      gram[a1 * n + b] = p10;
      gram[a1 * n + b1] = p11;
      gram[a2 * n + b] = p20;
      gram[a2 * n + b1] = p21;
    }
  }
}

/**
 * G = J^T J (full symmetric n x n) of a column-major Jacobian (column a is t[a m .. a m + m)),
 * so that every entry is a contiguous dot product; optionally also g = J^T v.
 *
 * Matrices of m n^2 / 2 >= 2000 multiply-adds go to the WebAssembly SIMD kernel below,
 * the rest (and everything where WebAssembly SIMD is unavailable) to the scalar kernel
 * {@link gramUpperScalar}. Measured on the B1 benchmark (221 x 35, copies included): about 20 us
 * per call against 70-95 us for the scalar kernel; at 221 x 19, 7 against 23-33 us.
 *
 * @param t column-major m x n Jacobian (length >= m * n).
 * @param m rows (residuals), n columns (parameters).
 * @param gram output n x n (row-major, symmetric), overwritten.
 * @param vector optional v (length m): when given with `gradient`, also g = J^T v (length n).
 */
export function gramMatrixOfColumns(
  t: Float64Array,
  m: number,
  n: number,
  gram: Float64Array,
  vector?: Float64Array,
  gradient?: Float64Array,
): void {
  if (!gramUpperBySimd(t, m, n, gram, vector, gradient)) {
    gramUpperScalar(t, m, n, gram);
    if (vector && gradient) columnsTimesVector(t, m, n, vector, gradient);
  }
  // Mirror the upper triangle onto the lower one.
  for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) gram[b * n + a] = gram[a * n + b];
}

/** g = J^T v for column-major J: contiguous dot products, two accumulators. */
function columnsTimesVector(t: Float64Array, m: number, n: number, vector: Float64Array, gradient: Float64Array): void {
  for (let a = 0; a < n; a++) {
    const ca = a * m;
    let s0 = 0;
    let s1 = 0;
    let i = 0;
    for (; i + 1 < m; i += 2) {
      s0 += t[ca + i] * vector[i];
      s1 += t[ca + i + 1] * vector[i + 1];
    }
    if (i < m) s0 += t[ca + i] * vector[i];
    gradient[a] = s0 + s1;
  }
}

/**
 * g = J^T r.
 *
 * @param jac row-major m x n; r length m; out length n, overwritten.
 */
export function transposeTimesVector(jac: Float64Array, m: number, n: number, r: Float64Array, out: Float64Array): void {
  out.fill(0, 0, n);
  for (let i = 0; i < m; i++) {
    const ri = r[i];
    if (ri === 0) continue;
    const row = i * n;
    for (let a = 0; a < n; a++) out[a] += jac[row + a] * ri;
  }
}

/** Euclidean norm of the first `n` entries, scaled to avoid overflow and underflow. */
export function euclideanNorm(x: ArrayLike<number>, n: number = x.length): number {
  let scale = 0;
  for (let i = 0; i < n; i++) {
    const v = Math.abs(x[i]);
    if (v > scale) scale = v;
  }
  if (scale === 0 || !Number.isFinite(scale)) return scale;
  let sum = 0;
  for (let i = 0; i < n; i++) {
    const v = x[i] / scale;
    sum += v * v;
  }
  return scale * Math.sqrt(sum);
}

/** Sum of squares of the first `n` entries (no scaling: callers check for overflow). */
export function sumOfSquares(x: ArrayLike<number>, n: number = x.length): number {
  let s = 0;
  for (let i = 0; i < n; i++) s += x[i] * x[i];
  return s;
}

/**
 * In-place Cholesky factorisation A = L L^T of a symmetric n x n matrix (lower triangle used).
 * On success the lower triangle of `a` holds L and the function returns true; when a pivot is
 * not positive (or not above `relativePivotFloor` times the original diagonal entry) it returns
 * false and `a` is left partly overwritten.
 */
export function choleskyInPlace(a: Float64Array, n: number, relativePivotFloor = 0): boolean {
  for (let j = 0; j < n; j++) {
    const rj = j * n;
    let d = a[rj + j];
    const original = d;
    for (let k = 0; k < j; k++) d -= a[rj + k] * a[rj + k];
    if (!(d > relativePivotFloor * original) || !(d > 0)) return false;
    const ljj = Math.sqrt(d);
    a[rj + j] = ljj;
    const inv = 1 / ljj;
    for (let i = j + 1; i < n; i++) {
      const ri = i * n;
      let s = a[ri + j];
      for (let k = 0; k < j; k++) s -= a[ri + k] * a[rj + k];
      a[ri + j] = s * inv;
    }
  }
  return true;
}

/** Solve L y = b in place (b becomes y), L lower triangular from {@link choleskyInPlace}. */
export function forwardSubstitute(l: Float64Array, n: number, b: Float64Array): void {
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    let s = b[i];
    for (let k = 0; k < i; k++) s -= l[ri + k] * b[k];
    b[i] = s / l[ri + i];
  }
}

/** Solve L^T x = y in place (y becomes x). */
export function backSubstituteTransposed(l: Float64Array, n: number, y: Float64Array): void {
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i];
    for (let k = i + 1; k < n; k++) s -= l[k * n + i] * y[k];
    y[i] = s / l[i * n + i];
  }
}

/**
 * Inverse of a symmetric positive-definite matrix, or null when it is numerically singular.
 *
 * The matrix is first scaled to unit diagonal (A = D S D, D = sqrt(diag A)) so the test is on
 * the conditioning of the correlation-like matrix S: it is declared singular when a Cholesky
 * pivot of S falls below `pivotFloor` (default 1e-13, i.e. a reciprocal condition number
 * of about 1e-13). Entries of A that are zero on the diagonal make it singular.
 *
 * @param a symmetric n x n (row-major), not modified.
 * @returns a new n x n Float64Array, or null.
 */
export function inverseSymmetricPositiveDefinite(a: Float64Array, n: number, pivotFloor = 1e-13): Float64Array | null {
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const v = a[i * n + i];
    if (!(v > 0) || !Number.isFinite(v)) return null;
    d[i] = Math.sqrt(v);
  }
  const l = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) l[i * n + j] = a[i * n + j] / (d[i] * d[j]);
  if (!choleskyInPlace(l, n, pivotFloor)) return null;
  // W = L^-1 (lower triangular, column by column), then S^-1 = W^T W: n^3/3 multiply-adds.
  const w = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    w[j * n + j] = 1 / l[j * n + j];
    for (let i = j + 1; i < n; i++) {
      const ri = i * n;
      let s = 0;
      for (let k = j; k < i; k++) s -= l[ri + k] * w[k * n + j];
      w[ri + j] = s / l[ri + i];
    }
  }
  const inv = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let k = i; k < n; k++) s += w[k * n + i] * w[k * n + j];
      const v = s / (d[i] * d[j]);
      inv[i * n + j] = v;
      inv[j * n + i] = v;
    }
  }
  return inv;
}

/** x^T A x for symmetric n x n A. */
export function quadraticForm(a: Float64Array, n: number, x: Float64Array): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    let t = 0;
    for (let j = 0; j < n; j++) t += a[ri + j] * x[j];
    s += x[i] * t;
  }
  return s;
}
