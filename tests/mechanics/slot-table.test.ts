/**
 * The samplers' key index (src/mechanics/slotTable.ts): keys found where they were claimed, colliding
 * keys kept apart, cleared in one step, and never more than half the slots taken (a probe always ends).
 * Common practice for open addressing, no source.
 */
import { describe, expect, it } from 'vitest';
import { SlotTable } from '../../src/mechanics/slotTable.js';

describe('SlotTable', () => {
  it('finds what it claimed, distinct slots for distinct keys, nothing after clear', () => {
    const table = new SlotTable(8);
    const slots = new Map<number, number>();
    // Keys that differ by multiples of the size, so that many share a home slot.
    for (let k = 0; k < 100; k++) {
      const key = k * 256 + 7;
      expect(table.find(key)).toBe(-1);
      const slot = table.free;
      expect(slot).toBeGreaterThanOrEqual(0);
      table.claim(key);
      slots.set(key, slot);
    }
    expect(new Set(slots.values()).size).toBe(100);
    for (const [key, slot] of slots) expect(table.find(key)).toBe(slot);
    expect(table.find(5)).toBe(-1);
    table.clear();
    for (const key of slots.keys()) expect(table.find(key)).toBe(-1);
  });

  it('refuses a key beyond half its slots', () => {
    const table = new SlotTable(4);
    for (let key = 0; key < 8; key++) {
      expect(table.find(key)).toBe(-1);
      table.claim(key);
    }
    expect(table.find(100)).toBe(-1);
    expect(table.free).toBe(-1);
    table.claim(100);
    expect(table.find(100)).toBe(-1);
    for (let key = 0; key < 8; key++) expect(table.find(key)).toBeGreaterThanOrEqual(0);
  });
});
