/**
 * GradeIndex (evaluate/grades.ts) against the slow obvious answer: the distinct grades sorted, the items
 * per grade, each slot's rank among them. Three paths answer depending on the grades (whole grades 0-15
 * counted by value, a few other distinct grades searched, many sorted); all must agree, down to the sign
 * of a zero grade, which is the first one seen (-0 and 0 are one grade).
 */
import { describe, expect, it } from 'vitest';
import { GradeIndex } from '../../extension/engine/evaluate/grades';
import { seededRandom } from '../reference/random';

function slowIndex(grades: readonly number[]) {
  const values: number[] = [];
  for (const g of grades) if (!values.some((v) => v === g)) values.push(g);
  values.sort((a, b) => a - b);
  return {
    values,
    count: values.map((v) => grades.filter((g) => g === v).length),
    rank: grades.map((g) => values.findIndex((v) => v === g)),
  };
}

const KINDS: [string, (rnd: () => number) => number][] = [
  ['whole grades 0-4', (rnd) => Math.floor(rnd() * 5)],
  ['whole grades 0-15, zero sometimes -0', (rnd) => (rnd() < 0.1 ? -0 : Math.floor(rnd() * 16))],
  ['whole grades 0-16 (one past the counted ones)', (rnd) => Math.floor(rnd() * 17)],
  ['negative grades', (rnd) => Math.floor(rnd() * 5) - 2],
  ['halves', (rnd) => Math.floor(rnd() * 8) / 2],
  ['many distinct values', (rnd) => Math.round(rnd() * 1e6) / 100],
  ['huge grades', (rnd) => Math.floor(rnd() * 4) * 1e12],
];

describe('the distinct grades of a query', () => {
  it.each(KINDS)('%s agree with sorting them out by hand (seeded random lists)', (_, draw) => {
    const rnd = seededRandom(31);
    const index = new GradeIndex();
    for (let trial = 0; trial < 300; trial++) {
      const n = Math.floor(rnd() * 120);
      const grades = Array.from({ length: n }, () => draw(rnd));
      // The index is reused from list to list, as scoring does.
      index.build(Float64Array.from(grades), n);
      const expected = slowIndex(grades);
      expect(index.distinct).toBe(expected.values.length);
      expect(Array.from(index.values.subarray(0, index.distinct))).toEqual(expected.values);
      expect(Array.from(index.count.subarray(0, index.distinct))).toEqual(expected.count);
      expect(Array.from(index.rank.subarray(0, n))).toEqual(expected.rank);
      // Zero keeps the sign of the first zero seen.
      const zero = index.values.subarray(0, index.distinct).findIndex((v) => v === 0);
      if (zero >= 0) expect(Object.is(index.values[zero], grades.find((g) => g === 0))).toBe(true);
    }
  });
});
