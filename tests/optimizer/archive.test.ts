import { describe, expect, it } from 'vitest';
import { ParetoArchive, type SerializedArchive } from '../../src/optimizer/archive.js';
import { SeededRandom } from '../../src/optimizer/random.js';
import type { Evaluation } from '../../src/optimizer/types.js';

interface Offered {
  design: Float64Array;
  evaluation: Evaluation;
}

/**
 * Random offers near the plane sum(f) = 1 (in minimisation form; 'max' objectives are given
 * negated), on a grid of 1/16 so that ties and exact duplicates occur, some pushed off the
 * plane (dominated), some infeasible, some failed. design[0] is the offer index.
 */
function randomOffers(count: number, objectiveCount: number, seed: number, maximize: readonly boolean[] = []): Offered[] {
  const random = new SeededRandom(seed);
  const offers: Offered[] = [];
  for (let i = 0; i < count; i++) {
    const weights: number[] = [];
    for (let m = 0; m < objectiveCount; m++) weights.push(random.next());
    const total = weights.reduce((sum, value) => sum + value, 0);
    const objectives: number[] = [];
    for (let m = 0; m < objectiveCount; m++) {
      const offPlane = random.next() < 0.5 ? Math.floor(random.next() * 4) / 16 : 0;
      const value = Math.round((16 * weights[m]!) / total) / 16 + offPlane;
      objectives.push(maximize[m] ? -value : value);
    }
    const roll = random.next();
    const evaluation: Evaluation =
      roll < 0.1 ? { objectives, violation: 0.5 } : roll < 0.15 ? { objectives, violation: 0, failed: 'solver failed' } : { objectives, violation: 0 };
    offers.push({ design: Float64Array.from([i, random.next()]), evaluation });
  }
  return offers;
}

/** Brute force: a feasible offer survives when no feasible offer dominates it and no earlier one equals it. */
function bruteForceSurvivors(offers: Offered[], maximize: boolean[]): number[] {
  const minimised = offers.map((offer) => offer.evaluation.objectives.map((value, m) => (maximize[m] ? -value : value)));
  const feasible = offers.map((offer) => offer.evaluation.failed === undefined && offer.evaluation.violation === 0);
  const survivors: number[] = [];
  for (let i = 0; i < offers.length; i++) {
    if (!feasible[i]) continue;
    let beaten = false;
    for (let j = 0; j < offers.length && !beaten; j++) {
      if (j === i || !feasible[j]) continue;
      const a = minimised[j]!;
      const b = minimised[i]!;
      const noWorse = a.every((value, m) => value <= b[m]!);
      const equal = a.every((value, m) => value === b[m]!);
      if (noWorse && (!equal || j < i)) beaten = true;
    }
    if (!beaten) survivors.push(i);
  }
  return survivors;
}

describe('ParetoArchive', () => {
  for (const [objectiveCount, senses] of [
    [2, ['min', 'min']],
    [3, ['min', 'max', 'min']],
    [4, ['max', 'min', 'min', 'max']],
  ] as const) {
    it(`keeps exactly the non-dominated feasible offers, first of equals, in offer order (${objectiveCount} objectives, ${senses.join('/')})`, () => {
      const maximize = senses.map((sense) => sense === 'max');
      const offers = randomOffers(1500, objectiveCount, 17 + objectiveCount, maximize);
      const archive = new ParetoArchive(senses.map((sense) => ({ sense })));
      for (const offer of offers) archive.offer(offer.design, offer.evaluation);
      const expected = bruteForceSurvivors(offers, maximize);
      // The data must exercise the archive: many survivors, and duplicates among them.
      expect(expected.length).toBeGreaterThan(10);
      const survivorKeys = new Set(expected.map((i) => offers[i]!.evaluation.objectives.join(',')));
      const feasibleCopies = offers.filter((offer) => offer.evaluation.violation === 0 && offer.evaluation.failed === undefined && survivorKeys.has(offer.evaluation.objectives.join(',')));
      expect(feasibleCopies.length).toBeGreaterThan(expected.length);
      expect(archive.size).toBe(expected.length);
      expect(archive.members().map((member) => member.design[0])).toEqual(expected);
      for (const member of archive.members()) {
        expect(Array.from(member.design)).toEqual(Array.from(offers[member.design[0]!]!.design));
      }
    });
  }

  it('answers offer() truthfully and removes members a newcomer dominates', () => {
    const archive = new ParetoArchive([{ sense: 'min' }, { sense: 'min' }]);
    expect(archive.offer([1], { objectives: [1, 3], violation: 0 })).toBe(true);
    expect(archive.offer([2], { objectives: [3, 1], violation: 0 })).toBe(true);
    expect(archive.offer([3], { objectives: [2, 2], violation: 0 })).toBe(true);
    expect(archive.offer([4], { objectives: [2, 2], violation: 0 })).toBe(false); // duplicate: the first stays
    expect(archive.offer([5], { objectives: [3, 3], violation: 0 })).toBe(false); // dominated
    expect(archive.offer([6], { objectives: [0, 0], violation: 0.1 })).toBe(false); // infeasible
    expect(archive.offer([7], { objectives: [0, 0], violation: 0, failed: 'x' })).toBe(false); // failed
    expect(archive.offer([8], { objectives: [Number.NaN, 0], violation: 0 })).toBe(false); // NaN: failed when sanitized
    const before = archive.members();
    expect(archive.offer([9], { objectives: [1.5, 1.5], violation: 0 })).toBe(true); // removes (2,2) only
    expect(archive.members().map((member) => member.design[0])).toEqual([1, 2, 9]);
    expect(before.map((member) => member.design[0])).toEqual([1, 2, 3]); // an earlier view is not changed
    expect(archive.offer([10], { objectives: [0, 0], violation: 0 })).toBe(true); // removes everything
    expect(archive.members().map((member) => member.design[0])).toEqual([10]);
  });

  it('copies the offered design', () => {
    const archive = new ParetoArchive([{ sense: 'min' }]);
    const design = Float64Array.from([1, 2]);
    archive.offer(design, { objectives: [0], violation: 0 });
    design[0] = 99;
    expect(Array.from(archive.members()[0]!.design)).toEqual([1, 2]);
  });

  it('survives a JSON round trip exactly and behaves the same afterwards', () => {
    const senses = [{ sense: 'max' as const }, { sense: 'min' as const }, { sense: 'min' as const }];
    const offers = randomOffers(800, 3, 5, [true, false, false]);
    const original = new ParetoArchive(senses);
    for (const offer of offers.slice(0, 400)) original.offer(offer.design, offer.evaluation);
    original.offer(Float64Array.from([-0, 0.1]), { objectives: [100, -0, -1], violation: -0 });
    const text = JSON.stringify(original.toJSON());
    const restored = ParetoArchive.fromJSON(senses, JSON.parse(text) as SerializedArchive);
    expect(JSON.stringify(restored.toJSON())).toBe(text);
    for (const offer of offers.slice(400)) {
      expect(restored.offer(offer.design, offer.evaluation)).toBe(original.offer(offer.design, offer.evaluation));
    }
    expect(JSON.stringify(restored.toJSON())).toBe(JSON.stringify(original.toJSON()));
    expect(Object.is(restored.members().find((member) => member.evaluation.objectives[0] === 100)?.design[0], 0)).toBe(true);
  });

  it('refuses a serialized archive whose members dominate each other', () => {
    const state: SerializedArchive = {
      members: [
        { design: [0], evaluation: { objectives: [1, 1], violation: 0 } },
        { design: [1], evaluation: { objectives: [2, 2], violation: 0 } },
      ],
    };
    expect(() => ParetoArchive.fromJSON([{ sense: 'min' }, { sense: 'min' }], state)).toThrow(/member 1/);
  });
});
