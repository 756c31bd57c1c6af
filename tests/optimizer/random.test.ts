import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../src/optimizer/random.js';

describe('SeededRandom', () => {
  it('gives the same sequence for the same seed and different ones for different seeds', () => {
    const first = new SeededRandom(12345);
    const second = new SeededRandom(12345);
    const other = new SeededRandom(12346);
    const a = Array.from({ length: 1000 }, () => first.nextUint32());
    const b = Array.from({ length: 1000 }, () => second.nextUint32());
    const c = Array.from({ length: 1000 }, () => other.nextUint32());
    expect(a).toEqual(b);
    expect(a).not.toEqual(c);
  });

  it('pins the first outputs for seed 42 so that a change of the generator is noticed', () => {
    // Golden values recorded from this implementation (common practice, no source): sfc32
    // seeded through splitmix32 uses only 32-bit integer arithmetic, so these must not change
    // from machine to machine or engine to engine.
    const random = new SeededRandom(42);
    const outputs = Array.from({ length: 5 }, () => random.nextUint32());
    expect(outputs).toEqual(GOLDEN_SEED_42);
  });

  it('matches an independent BigInt coding of sfc32 from any state', () => {
    // sfc32 as defined in Doty-Humphrey's PractRand (from memory): t = a + b + d; d += 1;
    // a = b ^ (b >> 9); b = c + (c << 3); c = rotl(c, 21) + t; output t (all mod 2^32).
    const random = new SeededRandom(2024);
    for (let i = 0; i < 10; i++) random.next();
    let [a, b, c, d] = random.state().words.map(BigInt) as [bigint, bigint, bigint, bigint];
    const mask = 0xffffffffn;
    for (let i = 0; i < 2000; i++) {
      const t = (a + b + d) & mask;
      d = (d + 1n) & mask;
      a = b ^ (b >> 9n);
      b = (c + (c << 3n)) & mask;
      c = ((((c << 21n) | (c >> 11n)) & mask) + t) & mask;
      expect(random.nextUint32()).toBe(Number(t));
    }
  });

  it('continues exactly after a JSON round trip of its state', () => {
    const random = new SeededRandom(7);
    for (let i = 0; i < 137; i++) random.next();
    const copy = SeededRandom.fromState(JSON.parse(JSON.stringify(random.state())));
    for (let i = 0; i < 1000; i++) expect(copy.next()).toBe(random.next());
  });

  it('distinguishes large seeds by their high bits', () => {
    const low = new SeededRandom(5);
    const high = new SeededRandom(5 + 2 ** 32);
    expect(low.nextUint32()).not.toBe(high.nextUint32());
  });

  it('draws next() in [0,1) and int(n) in 0..n-1 roughly uniformly', () => {
    const random = new SeededRandom(99);
    const counts = new Array<number>(10).fill(0);
    const draws = 100_000;
    let outOfRange = 0;
    for (let i = 0; i < draws; i++) {
      const value = random.next();
      if (!(value >= 0 && value < 1)) outOfRange++;
      const index = random.int(10);
      if (!(index >= 0 && index < 10 && Number.isInteger(index))) outOfRange++;
      else counts[index]!++;
    }
    expect(outOfRange).toBe(0);
    // Chi-square with 9 degrees of freedom: 27.9 is the 0.999 quantile (standard statistical table).
    const expected = draws / 10;
    const chiSquare = counts.reduce((sum, count) => sum + ((count - expected) ** 2) / expected, 0);
    expect(chiSquare).toBeLessThan(27.9);
  });

  it('makes permutations', () => {
    const random = new SeededRandom(3);
    const permutation = random.permutation(new Int32Array(50));
    expect(Array.from(permutation).sort((a, b) => a - b)).toEqual(Array.from({ length: 50 }, (_, i) => i));
  });

  it('rejects bad seeds and bad states', () => {
    expect(() => new SeededRandom(0.5)).toThrow();
    expect(() => SeededRandom.fromState({ algorithm: 'sfc32', words: [1, 2, 3, -1] })).toThrow();
  });
});

const GOLDEN_SEED_42 = [853279530, 1920286840, 3588795744, 3644712829, 3990689672];
