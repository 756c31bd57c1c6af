/**
 * Small seeded pseudo-random source with an exactly serialisable state.
 *
 * Generator: sfc32 ("small fast chaotic", 128-bit state of four 32-bit words,
 * from Chris Doty-Humphrey's PractRand suite), seeded through splitmix32 from
 * an integer seed. All arithmetic is 32-bit integer arithmetic (`| 0`,
 * `Math.imul`, shifts), so the same seed gives the same sequence bit for bit
 * on every JavaScript engine and machine.
 */

/** Plain-JSON state of a SeededRandom: four unsigned 32-bit words. */
export interface RandomState {
  algorithm: 'sfc32';
  words: [number, number, number, number];
}

const TWO_POW_32 = 4294967296;

/** One step of splitmix32; returns [new state, output], both as int32. */
function splitmix32(state: number): [number, number] {
  const next = (state + 0x9e3779b9) | 0;
  let z = next;
  z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
  z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
  z ^= z >>> 16;
  return [next, z | 0];
}

export class SeededRandom {
  private a: number;
  private b: number;
  private c: number;
  private d: number;

  /** @param seed any safe integer (negative allowed); the low and high 32 bits both matter. */
  constructor(seed: number) {
    if (!Number.isSafeInteger(seed)) throw new RangeError(`seed must be a safe integer, got ${seed}`);
    const low = seed | 0;
    const high = Math.floor(seed / TWO_POW_32) | 0;
    let mix = low ^ Math.imul(high, 0x2545f491);
    const words: number[] = [];
    for (let i = 0; i < 4; i++) {
      const [next, output] = splitmix32(mix);
      mix = next;
      words.push(output);
    }
    this.a = words[0]!;
    this.b = words[1]!;
    this.c = words[2]!;
    this.d = words[3]!;
    // Discard the first outputs so that nearby seeds decorrelate (common practice for sfc32).
    for (let i = 0; i < 15; i++) this.nextUint32();
  }

  static fromState(state: RandomState): SeededRandom {
    if (state.algorithm !== 'sfc32' || !Array.isArray(state.words) || state.words.length !== 4) {
      throw new RangeError('not an sfc32 random state');
    }
    for (const word of state.words) {
      if (!Number.isInteger(word) || word < 0 || word >= TWO_POW_32) {
        throw new RangeError(`random state word ${word} is not an unsigned 32-bit integer`);
      }
    }
    const random = new SeededRandom(0);
    random.a = state.words[0] | 0;
    random.b = state.words[1] | 0;
    random.c = state.words[2] | 0;
    random.d = state.words[3] | 0;
    return random;
  }

  /** Plain JSON; `SeededRandom.fromState(r.state())` continues the same sequence. */
  state(): RandomState {
    return { algorithm: 'sfc32', words: [this.a >>> 0, this.b >>> 0, this.c >>> 0, this.d >>> 0] };
  }

  /** Independent copy continuing the same sequence. */
  clone(): SeededRandom {
    return SeededRandom.fromState(this.state());
  }

  /** Next raw output as an unsigned 32-bit integer. */
  nextUint32(): number {
    const t = (((this.a + this.b) | 0) + this.d) | 0;
    this.d = (this.d + 1) | 0;
    this.a = this.b ^ (this.b >>> 9);
    this.b = (this.c + (this.c << 3)) | 0;
    this.c = (this.c << 21) | (this.c >>> 11);
    this.c = (this.c + t) | 0;
    return t >>> 0;
  }

  /** Uniform in [0, 1), resolution 2^-32. */
  next(): number {
    return this.nextUint32() / TWO_POW_32;
  }

  /** Uniform integer in 0..n-1 (n a positive integer up to 2^32; bias below n/2^32). */
  int(n: number): number {
    if (!(n >= 1 && n <= TWO_POW_32 && Number.isInteger(n))) throw new RangeError(`int(n) needs a positive integer n, got ${n}`);
    return Math.floor(this.next() * n);
  }

  /** Fills `target` with a uniformly random permutation of 0..target.length-1 (Fisher-Yates). */
  permutation(target: Int32Array): Int32Array {
    for (let i = 0; i < target.length; i++) target[i] = i;
    for (let i = target.length - 1; i > 0; i--) {
      const j = this.int(i + 1);
      const held = target[i]!;
      target[i] = target[j]!;
      target[j] = held;
    }
    return target;
  }
}
