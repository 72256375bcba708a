// How a batch of runs crosses from a worker of the run pool to the main thread.
//
// Structured cloning a RunResult costs more on the receiving side than the run's share of the
// work there should: every object is rebuilt key by key from its serialized key strings, every
// number array element by element. A batch is therefore sent as
//  - the sample arrays (t and every signal of every run) one after another in a Float64Array,
//    and every other number of the runs in a second one; their buffers are transferred, not
//    copied;
//  - the structure as op codes in an Int32Array (transferred too): what each value is, with the
//    key list ("shape") of each object and each string sent once per batch;
//  - values the codec does not take apart (none in a RunResult: anything not a plain object,
//    array or primitive, and anything nested deeper than MAX_DEPTH), structured-cloned as they are.
// The receiver rebuilds the runs with their samples as Float64Array views on the transferred
// buffer (PooledRun); plainRun gives a RunResult with number arrays. Every value comes back as it
// was: numbers bit for bit (NaN, -0, infinities), strings, booleans, null, undefined, key order.
// Shared references are not kept (a value reached twice arrives as two copies), as in JSON.

import type { RunResult, SampledRun } from '../protocol';
import { put, sampleBuffer } from './plain';

export { plainRun } from './plain';

/**
 * A run as the pool returns it: a RunResult whose samples are Float64Array views on the buffer
 * its batch came back in (no copy, and nothing for the garbage collector to move while a sweep's
 * runs are held). plainRun turns it into a RunResult with number arrays for consumers that need
 * them (JSON, the report); element by element the values are the same.
 */
export type PooledRun = SampledRun;

export interface WireBatch {
  runs: number;
  /** Count of sample values in `data`. */
  samples: number;
  /** The samples, one array after another. */
  data: Float64Array;
  /** Every other number, in the order the values were packed. */
  nums: Float64Array;
  ops: Int32Array;
  /** Key lists of the batch's objects, each once. */
  shapes: string[][];
  /** The batch's strings, each once. */
  strs: string[];
  /** Values sent as they are. */
  others: unknown[];
}

// op codes; Str, Arr, Obj, Samples and Other are followed by one operand
const NUM = 0, STR = 1, TRUE = 2, FALSE = 3, NULL = 4, UNDEF = 5, ARR = 6, OBJ = 7, SAMPLES = 8, OTHER = 9;
/** Nesting below this is sent as it is (a RunResult nests four deep). */
const MAX_DEPTH = 32;

/** Copies a number array into a Float64Array: for arrays built with holes (new Array(n)) twice as fast as set(). */
function copyInto(c: ArrayLike<number>, d: Float64Array, o: number): void {
  const n = c.length;
  let i = 0;
  for (; i + 3 < n; i += 4) {
    d[o + i] = c[i];
    d[o + i + 1] = c[i + 1];
    d[o + i + 2] = c[i + 2];
    d[o + i + 3] = c[i + 3];
  }
  for (; i < n; i++) d[o + i] = c[i];
}

/** A sample array: a number array (RunResult) or a Float64Array (SampledRun). */
const isSamples = (v: unknown): v is ArrayLike<number> => Array.isArray(v) || v instanceof Float64Array;

const isPlainObject = (v: object): v is Record<string, unknown> => Object.getPrototypeOf(v) === Object.prototype;

interface ShapeNode {
  next: Map<string, ShapeNode>;
  id: number;
}

/**
 * Packs runs into batches. Each run is taken apart as it is added, its samples written straight
 * into the buffer that will be transferred, so a worker holds no more than the run in hand and
 * no sample is copied twice; the other scratch buffers are kept from batch to batch.
 */
export class RunPacker {
  private ops = new Int32Array(4096);
  private nOps = 0;
  private nums = new Float64Array(1024);
  private nNums = 0;
  /** The batch's samples: the buffer that goes out with it (made when the batch's first run comes). */
  private smp: Float64Array | undefined;
  private nSamples = 0;
  private nRuns = 0;
  private expected = 1;
  /** Samples of a run in the last batch, to size the next batch's buffer. */
  private perRun = 0;
  private shapes: string[][] = [];
  private shapeRoot: ShapeNode = { next: new Map(), id: -1 };
  private strs: string[] = [];
  private strIds = new Map<string, number>();
  private others: unknown[] = [];

  /** Starts a batch of about `runs` runs (sizes its sample buffer; more or fewer may come). */
  begin(runs: number): void {
    this.expected = Math.max(1, runs);
  }

  /** Adds a run to the batch being packed. */
  add(r: RunResult | SampledRun): void {
    this.run(r);
    this.nRuns++;
  }

  /** The batch of the runs added since the last one, and the buffers to transfer with it. */
  finish(): { batch: WireBatch; transfer: ArrayBuffer[] } {
    let data = this.smp ? this.smp.subarray(0, this.nSamples) : new Float64Array(0);
    // a buffer much larger than its samples (runs that failed early) is not sent as it is
    if (this.smp && this.nSamples < 0.75 * this.smp.length) data = data.slice();
    const nums = this.nums.slice(0, this.nNums);
    const ops = this.ops.slice(0, this.nOps);
    const batch: WireBatch = { runs: this.nRuns, samples: this.nSamples, data, nums, ops, shapes: this.shapes, strs: this.strs, others: this.others };
    if (this.nRuns) this.perRun = Math.ceil(this.nSamples / this.nRuns);
    this.smp = undefined;
    this.nOps = this.nNums = this.nSamples = this.nRuns = 0;
    this.expected = 1;
    this.shapes = [];
    this.shapeRoot = { next: new Map(), id: -1 };
    this.strs = [];
    this.strIds.clear();
    this.others = [];
    return { batch, transfer: [data.buffer as ArrayBuffer, nums.buffer as ArrayBuffer, ops.buffer as ArrayBuffer] };
  }

  /** A batch of the runs (add each, then finish). */
  pack(runs: Array<RunResult | SampledRun>): { batch: WireBatch; transfer: ArrayBuffer[] } {
    this.begin(runs.length);
    for (const r of runs) this.add(r);
    return this.finish();
  }

  private op(x: number): void {
    if (this.nOps === this.ops.length) {
      const g = new Int32Array(this.ops.length * 2);
      g.set(this.ops);
      this.ops = g;
    }
    this.ops[this.nOps++] = x;
  }

  private num(x: number): void {
    if (this.nNums === this.nums.length) {
      const g = new Float64Array(this.nums.length * 2);
      g.set(this.nums);
      this.nums = g;
    }
    this.nums[this.nNums++] = x;
  }

  /** The id of a key list: a walk down a tree of the batch's key lists, one key at a time. */
  private shape(keys: string[]): number {
    let node = this.shapeRoot;
    for (const k of keys) {
      let next = node.next.get(k);
      if (!next) node.next.set(k, (next = { next: new Map(), id: -1 }));
      node = next;
    }
    if (node.id < 0) {
      node.id = this.shapes.length;
      this.shapes.push(keys);
    }
    return node.id;
  }

  private str(s: string): number {
    let id = this.strIds.get(s);
    if (id === undefined) {
      id = this.strs.length;
      this.strs.push(s);
      this.strIds.set(s, id);
    }
    return id;
  }

  private samples(col: ArrayLike<number>): void {
    const n = col.length;
    this.op(SAMPLES);
    this.op(n);
    let smp = this.smp;
    if (!smp || this.nSamples + n > smp.length) {
      const want = Math.max(this.nSamples + n, smp ? 2 * smp.length : this.expected * Math.max(this.perRun, n));
      const g = sampleBuffer(want);
      if (smp) g.set(smp.subarray(0, this.nSamples));
      this.smp = smp = g;
    }
    if (col instanceof Float64Array) smp.set(col, this.nSamples);
    else copyInto(col, smp, this.nSamples);
    this.nSamples += n;
  }

  /** A run: as any object, but t and the signals' arrays go to the samples. */
  private run(r: RunResult | SampledRun): void {
    const rec = r as unknown as Record<string, unknown>;
    const keys = Object.keys(rec);
    this.op(OBJ);
    this.op(this.shape(keys));
    for (const k of keys) {
      const v = rec[k];
      if (k === 't' && isSamples(v)) this.samples(v);
      else if (k === 'signals' && v !== null && typeof v === 'object' && isPlainObject(v)) {
        const names = Object.keys(v);
        this.op(OBJ);
        this.op(this.shape(names));
        for (const n of names) {
          const col = v[n];
          if (isSamples(col)) this.samples(col);
          else this.value(col, 2);
        }
      } else this.value(v, 1);
    }
  }

  private value(v: unknown, depth: number): void {
    switch (typeof v) {
      case 'number':
        this.op(NUM);
        this.num(v);
        return;
      case 'string':
        this.op(STR);
        this.op(this.str(v));
        return;
      case 'boolean':
        this.op(v ? TRUE : FALSE);
        return;
      case 'undefined':
        this.op(UNDEF);
        return;
      case 'object':
        if (v === null) {
          this.op(NULL);
          return;
        }
        if (depth < MAX_DEPTH) {
          if (Array.isArray(v)) {
            const n = v.length;
            this.op(ARR);
            this.op(n);
            for (let i = 0; i < n; i++) this.value(v[i], depth + 1);
            return;
          }
          if (isPlainObject(v)) {
            const keys = Object.keys(v);
            this.op(OBJ);
            this.op(this.shape(keys));
            for (const k of keys) this.value(v[k], depth + 1);
            return;
          }
        }
    }
    this.op(OTHER);
    this.op(this.others.length);
    this.others.push(v);
  }
}

/** Reads a batch's values back, in the order they were packed. */
class Reader {
  private pc = 0;
  private sOff = 0;
  private nOff = 0;
  private readonly hasProto: boolean[];

  constructor(private readonly b: WireBatch) {
    this.hasProto = b.shapes.map((s) => s.includes('__proto__'));
  }

  /** Every op code, sample and number read. */
  get complete(): boolean {
    return this.pc === this.b.ops.length && this.sOff === this.b.samples && this.nOff === this.b.nums.length;
  }

  get leftOver(): string {
    const b = this.b;
    return `${b.ops.length - this.pc} op codes, ${b.samples - this.sOff} samples and ${b.nums.length - this.nOff} numbers`;
  }

  private operand(): number {
    const ops = this.b.ops;
    if (this.pc >= ops.length) throw new Error('run pool: a batch ends in the middle of a value');
    return ops[this.pc++];
  }

  read(): unknown {
    const op = this.operand();
    switch (op) {
      case NUM: {
        const nums = this.b.nums;
        if (this.nOff >= nums.length) throw new Error('run pool: a batch has fewer numbers than its values');
        return nums[this.nOff++];
      }
      case STR: {
        const i = this.operand(), strs = this.b.strs;
        if (!(i >= 0 && i < strs.length)) throw new Error(`run pool: a batch refers to string ${i} of ${strs.length}`);
        return strs[i];
      }
      case TRUE:
        return true;
      case FALSE:
        return false;
      case NULL:
        return null;
      case UNDEF:
        return undefined;
      case ARR: {
        const n = this.operand(), left = this.b.ops.length - this.pc;
        if (!(n >= 0 && n <= left)) throw new Error(`run pool: a batch has an array of ${n} values with ${left} op codes left`);
        const a: unknown[] = [];
        for (let i = 0; i < n; i++) a.push(this.read());
        return a;
      }
      case OBJ: {
        const i = this.operand();
        const keys = this.b.shapes[i];
        if (!keys) throw new Error(`run pool: a batch refers to key list ${i} of ${this.b.shapes.length}`);
        const o: Record<string, unknown> = {};
        if (this.hasProto[i]) for (const k of keys) put(o, k, this.read());
        else for (const k of keys) o[k] = this.read();
        return o;
      }
      case SAMPLES: {
        const n = this.operand(), data = this.b.data;
        if (!(n >= 0 && this.sOff + n <= this.b.samples)) throw new Error(`run pool: a batch's samples end before an array of ${n}`);
        const v = new Float64Array(data.buffer, data.byteOffset + this.sOff * 8, n);
        this.sOff += n;
        return v;
      }
      case OTHER: {
        const i = this.operand(), others = this.b.others;
        if (!(i >= 0 && i < others.length)) throw new Error(`run pool: a batch refers to value ${i} of ${others.length}`);
        return others[i];
      }
      default:
        throw new Error(`run pool: a batch has an unknown op code ${op}`);
    }
  }
}

/** The runs of a batch, their samples as views on its data buffer. */
export function unpackRuns(b: WireBatch): PooledRun[] {
  if (b.samples !== b.data.length) throw new Error(`run pool: a batch claims ${b.samples} samples and holds ${b.data.length}`);
  const r = new Reader(b);
  const out: PooledRun[] = [];
  for (let i = 0; i < b.runs; i++) out.push(r.read() as PooledRun);
  if (!r.complete) throw new Error(`run pool: a batch of ${b.runs} runs has ${r.leftOver} left over`);
  return out;
}
