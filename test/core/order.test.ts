/** Natural order of configuration labels (src/core/order.ts). */
import { describe, expect, it } from 'vitest';
import { byCodeUnits, byNatural } from '../../src/core/order.js';

describe('byNatural', () => {
  it('orders numbers inside labels by value: p2=16 < p2=192 < p2=400 (the order people read; common practice)', () => {
    const labels = ['sgm:p2=400', 'sgm:p2=16', 'sgm', 'sgm:p2=192', 'block:window=11', 'block:window=5'];
    expect([...labels].sort(byNatural)).toEqual(['block:window=5', 'block:window=11', 'sgm', 'sgm:p2=16', 'sgm:p2=192', 'sgm:p2=400']);
    // Code-unit order would put 192 before 400 but 16 before 192 only by accident of the first digit.
    expect([...labels].sort(byCodeUnits)).toEqual(['block:window=11', 'block:window=5', 'sgm', 'sgm:p2=16', 'sgm:p2=192', 'sgm:p2=400']);
  });

  it('compares decimals by value, and is a total order (equal values with other text fall back to code units)', () => {
    expect(['x=0.5', 'x=0.25', 'x=2'].sort(byNatural)).toEqual(['x=0.25', 'x=0.5', 'x=2']);
    expect(byNatural('x=1', 'x=01')).not.toBe(0);
    expect(byNatural('x=1', 'x=01')).toBe(-byNatural('x=01', 'x=1'));
    expect(byNatural('a', 'a')).toBe(0);
  });
});
