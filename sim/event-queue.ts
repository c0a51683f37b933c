/**
 * The discrete-event core's queue: a binary heap of events ordered by (tick, priority, seq)
 * with `seq` strictly increasing, so events at one tick and priority leave in the order they
 * were scheduled and every run is deterministic (the same ordering as SimPy's core).
 * Parallel typed arrays, no per-event objects; `clear()` resets the length.
 */

/** The same number, as a 32-bit integer when it is one (any other value as it is; -0 comes back as 0: ticks are never negative). */
function asSmall(value: number): number {
  const integer = value | 0;
  return integer === value ? integer : value;
}

export class EventQueue {
  private ticks: Float64Array;
  private priorities: Int32Array;
  private seqs: Float64Array;
  private kinds: Int32Array;
  private payloads: Int32Array;
  private size = 0;
  private nextSeq = 0;
  scheduled = 0;

  constructor(capacity = 1024) {
    this.ticks = new Float64Array(capacity);
    this.priorities = new Int32Array(capacity);
    this.seqs = new Float64Array(capacity);
    this.kinds = new Int32Array(capacity);
    this.payloads = new Int32Array(capacity);
  }

  get length(): number {
    return this.size;
  }

  clear(): void {
    this.size = 0;
  }

  /** Schedules an event; `kind` and `payload` are the caller's integers. */
  schedule(tick: number, priority: number, kind: number, payload = 0): void {
    if (this.size === this.ticks.length) this.grow();
    const seq = this.nextSeq++;
    this.scheduled++;
    let i = this.size++;
    while (i > 0) {
      const parent = (i - 1) >> 1;
      if (!this.before(tick, priority, seq, parent)) break;
      this.copy(parent, i);
      i = parent;
    }
    this.ticks[i] = tick;
    this.priorities[i] = priority;
    this.seqs[i] = seq;
    this.kinds[i] = kind;
    this.payloads[i] = payload;
  }

  /**
   * Tick of the next event, or Infinity when empty. An integer tick comes back as a small
   * integer: a number read from a Float64Array is a heap number in unoptimised code, and a
   * heap number tick stored in the world (currentTick) and the policies' fields changes those
   * objects' field representation, deoptimising the code compiled for them.
   */
  peekTick(): number {
    return this.size > 0 ? asSmall(this.ticks[0]) : Infinity;
  }

  peekKind(): number {
    return this.size > 0 ? this.kinds[0] : -1;
  }

  /** Removes the next event; its fields are then in `lastTick`, `lastKind`, `lastPayload`. */
  lastTick = 0;
  lastKind = 0;
  lastPayload = 0;
  pop(): boolean {
    if (this.size === 0) return false;
    this.lastTick = asSmall(this.ticks[0]);
    this.lastKind = this.kinds[0];
    this.lastPayload = this.payloads[0];
    const last = --this.size;
    if (last > 0) {
      const tick = this.ticks[last];
      const priority = this.priorities[last];
      const seq = this.seqs[last];
      const kind = this.kinds[last];
      const payload = this.payloads[last];
      let i = 0;
      for (;;) {
        const left = 2 * i + 1;
        if (left >= last) break;
        const right = left + 1;
        let child = left;
        if (right < last && this.less(right, left)) child = right;
        if (!this.before(this.ticks[child], this.priorities[child], this.seqs[child], -1, tick, priority, seq)) break;
        this.copy(child, i);
        i = child;
      }
      this.ticks[i] = tick;
      this.priorities[i] = priority;
      this.seqs[i] = seq;
      this.kinds[i] = kind;
      this.payloads[i] = payload;
    }
    return true;
  }

  private less(a: number, b: number): boolean {
    return this.before(this.ticks[a], this.priorities[a], this.seqs[a], b);
  }

  /** True when (tick, priority, seq) sorts before the event at index `other` (or before the explicit triple). */
  private before(tick: number, priority: number, seq: number, other: number, otherTick?: number, otherPriority?: number, otherSeq?: number): boolean {
    const t = other >= 0 ? this.ticks[other] : (otherTick as number);
    if (tick !== t) return tick < t;
    const p = other >= 0 ? this.priorities[other] : (otherPriority as number);
    if (priority !== p) return priority < p;
    return seq < (other >= 0 ? this.seqs[other] : (otherSeq as number));
  }

  private copy(from: number, to: number): void {
    this.ticks[to] = this.ticks[from];
    this.priorities[to] = this.priorities[from];
    this.seqs[to] = this.seqs[from];
    this.kinds[to] = this.kinds[from];
    this.payloads[to] = this.payloads[from];
  }

  private grow(): void {
    const capacity = this.ticks.length * 2;
    const f64 = (a: Float64Array) => { const b = new Float64Array(capacity); b.set(a); return b; };
    const i32 = (a: Int32Array) => { const b = new Int32Array(capacity); b.set(a); return b; };
    this.ticks = f64(this.ticks);
    this.priorities = i32(this.priorities);
    this.seqs = f64(this.seqs);
    this.kinds = i32(this.kinds);
    this.payloads = i32(this.payloads);
  }
}
