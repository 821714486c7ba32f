/**
 * A minimal writer of the WebAssembly binary format (WebAssembly Core
 * Specification 2.0, chapter 5 "Binary Format"): just the sections and the
 * handful of opcodes the expression compiler needs. Bytes only; no text format
 * is produced or parsed.
 */

/** Value type f64 (spec 5.3.1). */
export const F64 = 0x7c;
/** Value type i32 (spec 5.3.1). */
export const I32 = 0x7f;
/** Block type of a block that leaves nothing on the stack (spec 5.4.1). */
export const EMPTY_BLOCK = 0x40;

/** The opcodes we emit (spec 5.4). */
export const OP = {
  block: 0x02,
  if: 0x04,
  else: 0x05,
  end: 0x0b,
  br: 0x0c,
  brIf: 0x0d,
  return: 0x0f,
  call: 0x10,
  localGet: 0x20,
  localSet: 0x21,
  localTee: 0x22,
  f64Load: 0x2b,
  f64Store: 0x39,
  i32Const: 0x41,
  i64Const: 0x42,
  f64Const: 0x44,
  i32Eqz: 0x45,
  i32Eq: 0x46,
  i32Ne: 0x47,
  i32LtS: 0x48,
  i32GtS: 0x4a,
  i32LeS: 0x4c,
  i32GeS: 0x4e,
  i32Sub: 0x6b,
  i32And: 0x71,
  i32Or: 0x72,
  i32ShrS: 0x75,
  i64Shl: 0x86,
  i64ShrU: 0x88,
  i32WrapI64: 0xa7,
  i32TruncF64S: 0xaa,
  i64ExtendI32U: 0xad,
  f64ConvertI32S: 0xb7,
  i64ReinterpretF64: 0xbd,
  f64ReinterpretI64: 0xbf,
  f64Eq: 0x61,
  f64Ne: 0x62,
  f64Lt: 0x63,
  f64Gt: 0x64,
  f64Le: 0x65,
  f64Abs: 0x99,
  f64Neg: 0x9a,
  f64Sqrt: 0x9f,
  f64Add: 0xa0,
  f64Sub: 0xa1,
  f64Mul: 0xa2,
  f64Div: 0xa3,
  f64Max: 0xa5,
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
  return assembleFunctions({
    types: parts.types,
    imports: parts.imports,
    functions: [
      { type: parts.body.type, locals: parts.body.locals > 0 ? [{ count: parts.body.locals, type: F64 }] : [], code: parts.body.code, export: "run" },
    ],
    memoryPages: parts.memoryPages,
  });
}

export interface DefinedFunction {
  type: number;
  /** Local declarations beyond the parameters, in runs of one value type. */
  locals: readonly { count: number; type: number }[];
  /** The body without the final `end`. */
  code: Uint8Array;
  /** The export name, if the host may call it. */
  export?: string;
}

export interface FunctionModuleParts {
  types: readonly FunctionType[];
  /** Imported functions (module "m"), with their type index; they take function indices 0 … imports.length − 1. */
  imports: readonly { field: string; type: number }[];
  /** Defined functions; function i here has index imports.length + i. */
  functions: readonly DefinedFunction[];
  /** Pages of 64 KiB of the module's own memory (exported as "memory"). */
  memoryPages: number;
}

/** Assembles a module of several functions and one exported memory (spec 5.5). */
export function assembleFunctions(parts: FunctionModuleParts): Uint8Array {
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
  section(3, (w) => w.vector(parts.functions, (f) => w.u32(f.type)));
  section(5, (w) => w.vector([parts.memoryPages], (pages) => w.byte(0x01).u32(pages).u32(pages)));
  const exported = parts.functions.flatMap((f, i) => (f.export === undefined ? [] : [{ name: f.export, index: parts.imports.length + i }]));
  section(7, (w) => {
    w.u32(exported.length + 1);
    for (const e of exported) w.name(e.name).byte(0x00).u32(e.index);
    w.name("memory").byte(0x02).u32(0);
  });
  section(10, (w) => {
    w.u32(parts.functions.length);
    for (const f of parts.functions) {
      const fn = new ByteWriter();
      fn.vector(f.locals, (l) => fn.u32(l.count).byte(l.type));
      fn.raw(f.code).byte(OP.end);
      w.u32(fn.length).raw(fn.toBytes());
    }
  });
  return out.toBytes();
}

/**
 * Emits a function body with f64 memory access by absolute slot (8 bytes
 * each) or relative to an i32 local, and the few control forms we use.
 */
export class CodeWriter {
  readonly w = new ByteWriter();
  op(byte: number): this {
    this.w.byte(byte);
    return this;
  }
  get(local: number): this {
    this.w.byte(OP.localGet).u32(local);
    return this;
  }
  set(local: number): this {
    this.w.byte(OP.localSet).u32(local);
    return this;
  }
  tee(local: number): this {
    this.w.byte(OP.localTee).u32(local);
    return this;
  }
  f64(value: number): this {
    this.w.byte(OP.f64Const).f64(value);
    return this;
  }
  i32(value: number): this {
    this.w.byte(OP.i32Const).i32(value);
    return this;
  }
  /** Pushes the f64 at slot `slot`. */
  load(slot: number): this {
    return this.i32(0).memory(OP.f64Load, slot);
  }
  /** Pushes the f64 at slot `slot` past the i32 address held in local `base`. */
  loadAt(base: number, slot: number): this {
    return this.get(base).memory(OP.f64Load, slot);
  }
  /** Stores the value `push` leaves on the stack at slot `slot`. */
  store(slot: number, push: () => void): this {
    this.i32(0);
    push();
    return this.memory(OP.f64Store, slot);
  }
  storeAt(base: number, slot: number, push: () => void): this {
    this.get(base);
    push();
    return this.memory(OP.f64Store, slot);
  }
  /** An f64 load or store with 8-byte alignment at byte offset 8·slot from the address on the stack. */
  private memory(opcode: number, slot: number): this {
    this.w
      .byte(opcode)
      .u32(3)
      .u32(8 * slot);
    return this;
  }
  call(index: number): this {
    this.w.byte(OP.call).u32(index);
    return this;
  }
  /** If the i32 on the stack is non-zero, run `then` (and otherwise `otherwise`); nothing is left on the stack. */
  ifNonZero(then: () => void, otherwise?: () => void): this {
    this.w.byte(OP.if).byte(EMPTY_BLOCK);
    then();
    if (otherwise) {
      this.w.byte(OP.else);
      otherwise();
    }
    this.w.byte(OP.end);
    return this;
  }
  bytes(): Uint8Array {
    return this.w.toBytes();
  }
}
