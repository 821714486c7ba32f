/**
 * A minimal writer of the WebAssembly binary format (WebAssembly Core
 * Specification 2.0, chapter 5 "Binary Format"): just the sections and the
 * handful of opcodes the expression compiler needs. Bytes only; no text format
 * is produced or parsed.
 */

/** Value type f64 (spec 5.3.1). */
export const F64 = 0x7c;

/** The opcodes we emit (spec 5.4). */
export const OP = {
  end: 0x0b,
  call: 0x10,
  localGet: 0x20,
  localSet: 0x21,
  localTee: 0x22,
  f64Load: 0x2b,
  f64Store: 0x39,
  i32Const: 0x41,
  f64Const: 0x44,
  f64Abs: 0x99,
  f64Neg: 0x9a,
  f64Sqrt: 0x9f,
  f64Add: 0xa0,
  f64Sub: 0xa1,
  f64Mul: 0xa2,
  f64Div: 0xa3,
} as const;

/** A growable byte buffer with the format's integer encodings (LEB128, spec 5.2.2). */
export class ByteWriter {
  private bytes = new Uint8Array(256);
  length = 0;

  private reserve(extra: number): void {
    if (this.length + extra <= this.bytes.length) return;
    let size = this.bytes.length * 2;
    while (size < this.length + extra) size *= 2;
    const grown = new Uint8Array(size);
    grown.set(this.bytes.subarray(0, this.length));
    this.bytes = grown;
  }

  byte(value: number): this {
    this.reserve(1);
    this.bytes[this.length++] = value & 0xff;
    return this;
  }

  /** Unsigned LEB128 of a non-negative integer below 2³². */
  u32(value: number): this {
    if (!(Number.isInteger(value) && value >= 0 && value <= 0xffffffff)) throw new RangeError(`u32 out of range: ${value}`);
    let v = value;
    do {
      let b = v % 128;
      v = Math.floor(v / 128);
      if (v !== 0) b |= 0x80;
      this.byte(b);
    } while (v !== 0);
    return this;
  }

  /** Signed LEB128 of a 32-bit integer. */
  i32(value: number): this {
    if (!(Number.isInteger(value) && value >= -0x80000000 && value <= 0x7fffffff)) throw new RangeError(`i32 out of range: ${value}`);
    let v = value | 0;
    for (;;) {
      const b = v & 0x7f;
      v >>= 7;
      const done = (v === 0 && (b & 0x40) === 0) || (v === -1 && (b & 0x40) !== 0);
      this.byte(done ? b : b | 0x80);
      if (done) return this;
    }
  }

  /** An IEEE 754 double, little-endian. */
  f64(value: number): this {
    this.reserve(8);
    new DataView(this.bytes.buffer, this.bytes.byteOffset + this.length, 8).setFloat64(0, value, true);
    this.length += 8;
    return this;
  }

  /** A name: its UTF-8 length, then the bytes. */
  name(text: string): this {
    const encoded = new TextEncoder().encode(text);
    this.u32(encoded.length);
    return this.raw(encoded);
  }

  raw(data: Uint8Array): this {
    this.reserve(data.length);
    this.bytes.set(data, this.length);
    this.length += data.length;
    return this;
  }

  /** A vector: its element count, then the elements written by `each`. */
  vector<T>(items: readonly T[], each: (item: T) => void): this {
    this.u32(items.length);
    for (const item of items) each(item);
    return this;
  }

  toBytes(): Uint8Array {
    return this.bytes.slice(0, this.length);
  }
}

export interface FunctionType {
  params: readonly number[];
  results: readonly number[];
}

export interface ModuleParts {
  types: readonly FunctionType[];
  /** Imported functions (module "m"), with their type index; they take function indices 0 … imports.length − 1. */
  imports: readonly { field: string; type: number }[];
  /** The one defined function: its type index, its f64 locals beyond the parameters, its body (without the final `end`). */
  body: { type: number; locals: number; code: Uint8Array };
  /** Pages of 64 KiB of the module's own memory (exported as "memory"; the function is exported as "run"). */
  memoryPages: number;
}

/** Assembles a module with one exported function and one exported memory (spec 5.5). */
export function assembleModule(parts: ModuleParts): Uint8Array {
  const out = new ByteWriter();
  out.raw(Uint8Array.of(0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00));
  const section = (id: number, write: (w: ByteWriter) => void) => {
    const content = new ByteWriter();
    write(content);
    out.byte(id).u32(content.length).raw(content.toBytes());
  };
  section(1, (w) =>
    w.vector(parts.types, (t) => {
      w.byte(0x60);
      w.vector(t.params, (p) => w.byte(p));
      w.vector(t.results, (r) => w.byte(r));
    }),
  );
  if (parts.imports.length > 0) section(2, (w) => w.vector(parts.imports, (imp) => w.name("m").name(imp.field).byte(0x00).u32(imp.type)));
  section(3, (w) => w.vector([parts.body.type], (t) => w.u32(t)));
  section(5, (w) => w.vector([parts.memoryPages], (pages) => w.byte(0x01).u32(pages).u32(pages)));
  section(7, (w) => {
    w.u32(2);
    w.name("run").byte(0x00).u32(parts.imports.length);
    w.name("memory").byte(0x02).u32(0);
  });
  section(10, (w) => {
    const fn = new ByteWriter();
    if (parts.body.locals > 0) fn.u32(1).u32(parts.body.locals).byte(F64);
    else fn.u32(0);
    fn.raw(parts.body.code).byte(OP.end);
    w.u32(1).u32(fn.length).raw(fn.toBytes());
  });
  return out.toBytes();
}
