import { describe, expect, it } from 'vitest';
import { mapGrid } from './map-grid';

// A 3 × 2 grid laid out by hand: cell index = row (y) × 3 + column (x).
describe('map grid', () => {
	it('places each reading in its cell, row by row', () => {
		const g = mapGrid({
			x: [20, 0, 10, 0, 20],
			y: [5, 0, 0, 5, 0],
			t: [310, 300, 350, null, 305],
			u: [1, 1, 2, null, 1],
			id: ['a', 'b', 'c', 'd', 'e']
		});
		expect(g.xs).toEqual([0, 10, 20]);
		expect(g.ys).toEqual([0, 5]);
		expect(g.ids).toEqual(['b', 'c', 'e', 'd', null, 'a']);
		expect(g.t).toEqual([300, 350, 305, null, null, 310]);
		expect(g.u).toEqual([1, 2, 1, null, null, 1]);
	});
});
