/**
 * Slots of 32-bit keys in one open-addressed table (linear probing from a Fibonacci hash), emptied in
 * constant time by an epoch: the index of the samplers' caches (adaptive.ts, crossings.ts,
 * regionQuadrature.ts), whose values live in the callers' typed arrays, indexed by slot. The table
 * takes at most half its slots, so a probe always ends. No allocation after construction.
 */
export class SlotTable {
  /** Slots (a power of two): the length of the callers' value arrays. */
  readonly size: number;
  private readonly shift: number;
  private readonly keys: Int32Array;
  private readonly stamps: Int32Array;
  private epoch = 1;
  private used = 0;
  /** After a `find` that missed: the slot where its key goes, or −1 when the table is half full. */
  free = -1;

  constructor(bits: number) {
    this.size = 1 << bits;
    this.shift = 32 - bits;
    this.keys = new Int32Array(this.size);
    this.stamps = new Int32Array(this.size);
  }

  /** Empties the table. */
  clear(): void {
    this.used = 0;
    this.epoch++;
    if (this.epoch > 0x3fffffff) {
      this.stamps.fill(0);
      this.epoch = 1;
    }
  }

  /** The slot holding `key`, or −1 (then `free` says where to `claim` it). */
  find(key: number): number {
    let slot = Math.imul(key, 0x9e3779b1) >>> this.shift;
    for (;;) {
      if (this.stamps[slot] !== this.epoch) break;
      if (this.keys[slot] === key) return slot;
      slot = (slot + 1) & (this.size - 1);
    }
    this.free = 2 * (this.used + 1) > this.size ? -1 : slot;
    return -1;
  }

  /** Takes the slot `free` of the last missed `find` for its key (nothing when it is −1). */
  claim(key: number): void {
    const slot = this.free;
    if (slot < 0) return;
    this.used++;
    this.stamps[slot] = this.epoch;
    this.keys[slot] = key;
    this.free = -1;
  }
}
