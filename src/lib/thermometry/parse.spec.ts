import { describe, expect, it } from 'vitest';
import { MAX_ROWS, MIN_POINTS, parseSpectrum } from './parse';
import { EngineError } from './types';

/** n rows of "x<sep>counts" on an ascending axis starting at x0. */
function rows(n: number, sep = ',', x0 = 400, step = 0.5): string[] {
	return Array.from({ length: n }, (_, i) => `${x0 + i * step}${sep}${100 + (i % 7)}`);
}

/** Parse and return the EngineError it must throw. */
function refusal(name: string, text: string): EngineError {
	try {
		parseSpectrum({ name, text });
	} catch (e) {
		expect(e).toBeInstanceOf(EngineError);
		return e as EngineError;
	}
	throw new Error('expected a refusal');
}

describe('parseSpectrum: accepted files', () => {
	it('reads CSV with a header and comment lines', () => {
		const text = ['# exported by the spectrometer', 'shift,counts', ...rows(30)].join('\n');
		const s = parseSpectrum({ name: 'a.csv', text });
		expect(s.format).toBe('csv');
		expect(s.x.length).toBe(30);
		expect(s.xLabel).toBe('shift');
		expect(s.x[0]).toBe(400);
		expect(s.y[1]).toBe(101);
		// Line 3 of the file holds the first data row (comment, header, then data).
		expect(s.rows[0]).toBe(3);
	});

	it('reads TSV without a header and with CRLF line ends', () => {
		const s = parseSpectrum({ name: 'a.tsv', text: rows(25, '\t').join('\r\n') + '\r\n' });
		expect(s.format).toBe('tsv');
		expect(s.x.length).toBe(25);
	});

	it('reads whitespace-aligned columns', () => {
		const text = rows(25, '   ')
			.map((l) => '  ' + l)
			.join('\n');
		const s = parseSpectrum({ name: 'a.txt', text });
		expect(s.format).toBe('whitespace');
		expect(s.y[0]).toBe(100);
	});

	it('sorts a descending axis and keeps counts with their x', () => {
		const text = rows(30).reverse().join('\n');
		const s = parseSpectrum({ name: 'd.csv', text });
		expect(s.reversed).toBe(true);
		for (let i = 1; i < s.x.length; i++) expect(s.x[i]).toBeGreaterThan(s.x[i - 1]);
		expect(s.x[0]).toBe(400);
		expect(s.y[0]).toBe(100);
		expect(s.rows[0]).toBe(30);
	});

	it('reads JCAMP-DX XYDATA', () => {
		const ys = Array.from({ length: 40 }, (_, i) => 50 + i);
		const lines = [];
		for (let i = 0; i < 40; i += 10) lines.push(`${100 + i} ${ys.slice(i, i + 10).join(' ')}`);
		const text = [
			'##TITLE=test',
			'##JCAMP-DX=4.24',
			'##DATA TYPE=RAMAN SPECTRUM',
			'##XUNITS=1/CM',
			'##YUNITS=COUNTS',
			'##FIRSTX=100',
			'##LASTX=139',
			'##NPOINTS=40',
			'##XFACTOR=1',
			'##YFACTOR=1',
			'##XYDATA=(X++(Y..Y))',
			...lines,
			'##END='
		].join('\n');
		const s = parseSpectrum({ name: 'a.jdx', text });
		expect(s.format).toBe('jcamp');
		expect(s.x.length).toBe(40);
		expect(s.x[39]).toBe(139);
		expect(s.y[39]).toBe(89);
		expect(s.xLabel).toBe('1/CM');
	});

	it('parses a 2,000-row file quickly', () => {
		const text = rows(2000).join('\n');
		const t0 = performance.now();
		for (let i = 0; i < 20; i++) parseSpectrum({ name: 'big.csv', text });
		// Generous bound so a loaded CI machine passes; typical is well under 2 ms per file.
		expect((performance.now() - t0) / 20).toBeLessThan(25);
	});
});

// One test per refusal of issue 3 item 1; each checks the stable code and that the message names
// the file (and the row where there is one).
describe('parseSpectrum: refusals', () => {
	it('empty file', () => {
		const e = refusal('empty.csv', '  \n\n');
		expect(e.code).toBe('empty-file');
		expect(e.message).toContain('empty.csv');
	});

	it('only comments counts as empty', () => {
		const e = refusal('c.csv', '# nothing here\n# still nothing\n');
		expect(e.code).toBe('empty-file');
		expect(e.message).toContain('c.csv');
	});

	it('header only', () => {
		const e = refusal('h.csv', 'shift,counts\n');
		expect(e.code).toBe('header-only');
		expect(e.message).toContain('h.csv');
	});

	it('not numeric', () => {
		const r = rows(30);
		r[11] = '405.5,abc';
		const e = refusal('n.csv', r.join('\n'));
		expect(e.code).toBe('not-numeric');
		expect(e.message).toContain('n.csv, row 12');
		expect(e.message).toContain('abc');
		expect(e.details.row).toBe(12);
	});

	it('NaN', () => {
		const r = rows(30);
		r[4] = '402,NaN';
		const e = refusal('nan.csv', r.join('\n'));
		expect(e.code).toBe('not-finite');
		expect(e.message).toContain('nan.csv, row 5');
	});

	it('infinity', () => {
		const r = rows(30);
		r[6] = 'Infinity,10';
		const e = refusal('inf.csv', r.join('\n'));
		expect(e.code).toBe('not-finite');
		expect(e.message).toContain('inf.csv, row 7');
	});

	it('too few points', () => {
		const e = refusal('few.csv', rows(MIN_POINTS - 1).join('\n'));
		expect(e.code).toBe('too-few-points');
		expect(e.message).toContain('few.csv');
		expect(e.message).toContain(String(MIN_POINTS - 1));
	});

	it('duplicate x', () => {
		const r = rows(30);
		r[9] = r[8];
		const e = refusal('dup.csv', r.join('\n'));
		expect(e.code).toBe('duplicate-x');
		expect(e.message).toContain('dup.csv, row 10');
	});

	it('non-monotonic x', () => {
		const r = rows(30);
		r[15] = '401,5';
		const e = refusal('mono.csv', r.join('\n'));
		expect(e.code).toBe('non-monotonic-x');
		expect(e.message).toContain('mono.csv, row 16');
	});

	it('inconsistent columns', () => {
		const r = rows(30);
		r[20] = '410,3,7';
		const e = refusal('cols.csv', r.join('\n'));
		expect(e.code).toBe('inconsistent-columns');
		expect(e.message).toContain('cols.csv, row 21');
	});

	it('a single column', () => {
		const e = refusal('one.csv', Array.from({ length: 30 }, (_, i) => String(i)).join('\n'));
		expect(e.code).toBe('too-few-columns');
		expect(e.message).toContain('one.csv, row 1');
	});

	it('more than 200,000 rows', () => {
		const e = refusal('huge.csv', rows(MAX_ROWS + 2).join('\n'));
		expect(e.code).toBe('too-many-rows');
		expect(e.message).toContain('huge.csv');
	});

	it('JCAMP-DX without data', () => {
		const e = refusal('nodata.jdx', '##TITLE=x\n##JCAMP-DX=4.24\n##END=\n');
		expect(e.code).toBe('empty-file');
		expect(e.message).toContain('nodata.jdx');
	});
});

describe('parseSpectrum: direct split and papaparse agree on plain text', () => {
	it('gives identical results on every format of the fixtures', async () => {
		const { readFileSync, readdirSync } = await import('node:fs');
		const dir = new URL('../../../fixtures/spectra/', import.meta.url);
		const files = readdirSync(dir).filter((f) => /\.(csv|tsv)$/.test(f) && !f.startsWith('broken'));
		expect(files.length).toBeGreaterThan(3);
		for (const f of files) {
			const text = readFileSync(new URL(f, dir), 'utf8');
			const a = parseSpectrum({ name: f, text });
			const b = parseSpectrum({ name: f, text }, { forcePapaparse: true });
			expect(Array.from(a.x)).toEqual(Array.from(b.x));
			expect(Array.from(a.y)).toEqual(Array.from(b.y));
			expect(Array.from(a.rows)).toEqual(Array.from(b.rows));
			expect(a.xLabel).toBe(b.xLabel);
		}
		const ws = rows(30, '   ')
			.map((l) => '  ' + l)
			.join('\n');
		expect(Array.from(parseSpectrum({ name: 'w', text: ws }).y)).toEqual(
			Array.from(parseSpectrum({ name: 'w', text: ws }, { forcePapaparse: true }).y)
		);
	});

	it('gives identical results on header, comment, CRLF, trailing-delimiter and number variants', () => {
		const numbers = ['1e3', '-2.5E-2', '+7', '0.000123', '12345678901234567', '.5', '5.', '1e-30'];
		const variants: string[] = [];
		for (const sep of [',', '\t', ';', ' ', '   ']) {
			for (const eol of ['\n', '\r\n', '\r']) {
				const body = Array.from(
					{ length: 30 },
					(_, i) => `${(400 + i * 0.37).toFixed(3)}${sep}${numbers[i % numbers.length]}`
				);
				variants.push(
					[`# comment, with "quotes"? no`, `x${sep}counts`, ...body].join(eol),
					['% instrument export', ...body.map((l) => `${l}${sep === ' ' ? '' : sep}`)].join(eol),
					['  ', ...body.map((l) => ` ${l} `), '', '// end'].join(eol)
				);
			}
		}
		for (const text of variants) {
			const plain = text.replace(/"/g, '');
			const a = parseSpectrum({ name: 'v', text: plain });
			const b = parseSpectrum({ name: 'v', text: plain }, { forcePapaparse: true });
			expect(Array.from(a.x)).toEqual(Array.from(b.x));
			expect(Array.from(a.y)).toEqual(Array.from(b.y));
			expect(Array.from(a.rows)).toEqual(Array.from(b.rows));
			expect(a.xLabel).toBe(b.xLabel);
			expect(a.format).toBe(b.format);
		}
	});

	it('agrees line by line where a two-column line is not plain (the quick line path falls back)', () => {
		const outcome = (text: string, force: boolean) => {
			try {
				const r = parseSpectrum({ name: 'l', text }, { forcePapaparse: force });
				return { x: Array.from(r.x), y: Array.from(r.y), rows: Array.from(r.rows) };
			} catch (e) {
				return { code: (e as EngineError).code, row: (e as EngineError).details?.row };
			}
		};
		const odd = [
			'1.5abc,2',
			'\t401,3',
			'402,',
			'403,4,5',
			'404 ,\t5\t',
			'405,1e400',
			' 406 , 7 ',
			'407,,8'
		];
		for (const sep of [',', '\t', ';']) {
			for (const line of odd) {
				const body = Array.from({ length: 30 }, (_, i) => `${300 + i}${sep}${i}`);
				body.splice(12, 0, line.replace(/,/g, sep));
				const text = ['x,y'.replace(',', sep), ...body].join('\n');
				expect(outcome(text, false)).toEqual(outcome(text, true));
			}
		}
	});

	it('quoted headers go through papaparse', () => {
		const text = ['"Raman shift (cm-1)","Counts, dark-subtracted"', ...rows(25)].join('\n');
		const s = parseSpectrum({ name: 'q.csv', text });
		expect(s.xLabel).toBe('Raman shift (cm-1)');
		expect(s.yLabel).toBe('Counts, dark-subtracted');
		expect(s.x.length).toBe(25);
	});
});
