/**
 * Step 1 of the engine: turn the text of a spectrum file into two numeric columns (x, counts).
 *
 * Delimited text (CSV, TSV, semicolon- or whitespace-separated) goes through papaparse;
 * JCAMP-DX (IUPAC) goes through jcampconverter. Nothing here knows about Raman shift or sides:
 * the x column is returned in the file's own unit and converted in `axis.ts`.
 *
 * Every refusal is an `EngineError` whose code is stable and whose message names the file, the
 * row (1-based line of the file, or the point number for JCAMP-DX) and the problem, so that a
 * person at an acquisition PC can fix the file without reading our code.
 */
import Papa from 'papaparse';
import { convert as convertJcamp } from 'jcampconverter';
import { EngineError } from './types';

/** Fewer points than this cannot constrain a band and its baseline (design.md: "~20"). */
export const MIN_POINTS = 20;
/** Larger files are not spectra from one detector readout; refuse before spending memory. */
export const MAX_ROWS = 200_000;

export type FileFormat = 'csv' | 'tsv' | 'semicolon' | 'whitespace' | 'jcamp';

/** A spectrum file's text with the name used in messages. */
export interface SpectrumFile {
	name: string;
	text: string;
}

export interface ParsedSpectrum {
	file: string;
	format: FileFormat;
	/** x in the file's own unit, strictly ascending (a descending file is reversed). */
	x: Float64Array;
	/** The counts column, same order as x. */
	y: Float64Array;
	/** Source row of each point (1-based file line; JCAMP-DX: 1-based point number). */
	rows: Int32Array;
	/** Column header or JCAMP-DX ##XUNITS, when the file has one; used as an axis hint. */
	xLabel?: string;
	yLabel?: string;
	/** True when the file's x axis was descending and was reversed. */
	reversed: boolean;
}

export interface ParseOptions {
	/** 0-based column of x (default 0). */
	xColumn?: number;
	/** 0-based column of counts (default 1). */
	yColumn?: number;
	/** Skip the plain-text scanner and always use papaparse (tests compare the two paths). */
	forcePapaparse?: boolean;
	/** Fewest points accepted (default MIN_POINTS); a response table may be shorter than a spectrum. */
	minPoints?: number;
}

/** Comment markers seen in spectrometer exports. */
const COMMENT = /^\s*(#|%|\/\/|!)/;
const NON_FINITE_WORD = /^[+-]?(nan|inf|infinity|-?1\.#in[df])$/i;

function fail(
	code: string,
	file: string,
	row: number | undefined,
	problem: string,
	unit: 'row' | 'point' = 'row'
): never {
	const where = row === undefined ? file : `${file}, ${unit} ${row}`;
	throw new EngineError(code, `${where}: ${problem}`, { file, row });
}

/** Parse one spectrum file; JCAMP-DX is recognised by its leading `##` labelled records. */
export function parseSpectrum(file: SpectrumFile, options: ParseOptions = {}): ParsedSpectrum {
	const text = file.text.charCodeAt(0) === 0xfeff ? file.text.slice(1) : file.text;
	if (text.trim() === '') fail('empty-file', file.name, undefined, 'the file is empty.');
	if (/^\s*##/.test(text)) return parseJcamp(file.name, text, options.minPoints ?? MIN_POINTS);
	if (!options.forcePapaparse) {
		const fast = scanPlain(file.name, text, options);
		if (fast) return fast;
	}
	return parseDelimited(file.name, text, options);
}

function detectDelimiter(lines: string[]): { delimiter: string; format: FileFormat } {
	// Tab and semicolon beat comma so that a decimal comma with ';' separators is not split twice.
	const sample = lines.filter((l) => l.trim() !== '').slice(0, 10);
	if (sample.some((l) => l.includes('\t'))) return { delimiter: '\t', format: 'tsv' };
	if (sample.some((l) => l.includes(';'))) return { delimiter: ';', format: 'semicolon' };
	if (sample.some((l) => l.includes(','))) return { delimiter: ',', format: 'csv' };
	return { delimiter: ' ', format: 'whitespace' };
}

/** The number in a field, or a reason it is not one. */
function numberOf(field: string): number | 'not-numeric' | 'not-finite' {
	// Unary + trims whitespace itself; only an empty field also reads as 0.
	const v = +field;
	if (Number.isFinite(v) && (v !== 0 || field.trim() !== '')) return v;
	const s = field.trim();
	if (s === '') return 'not-numeric';
	if (Number.isNaN(v) && !NON_FINITE_WORD.test(s)) return 'not-numeric';
	return 'not-finite';
}

/** Rows of fields, one per file line, by papaparse (which knows the CSV quoting rules). */
function splitRows(lines: string[], delimiter: string): string[][] {
	return Papa.parse<string[]>(lines.join('\n'), {
		delimiter,
		newline: '\n',
		header: false,
		skipEmptyLines: false,
		dynamicTyping: false
	}).data;
}

function refuseField(
	name: string,
	line: number,
	col: number,
	field: string,
	why: 'not-numeric' | 'not-finite'
): never {
	if (why === 'not-numeric') {
		fail(
			'not-numeric',
			name,
			line,
			`column ${col + 1} holds "${field.trim().slice(0, 40)}", which is not a number.`
		);
	}
	fail(
		'not-finite',
		name,
		line,
		`column ${col + 1} holds "${field.trim()}"; values must be finite numbers.`
	);
}

function parseDelimited(name: string, text: string, options: ParseOptions): ParsedSpectrum {
	const xCol = options.xColumn ?? 0;
	const yCol = options.yColumn ?? 1;
	const lines = text.split(/\r\n|\n|\r/);
	// Blank out comment lines instead of dropping them so papaparse row i stays file line i + 1,
	// and so a stray quote inside a comment cannot open a quoted field.
	let dataLines = 0;
	for (let i = 0; i < lines.length; i++) {
		if (COMMENT.test(lines[i])) lines[i] = '';
		else if (lines[i].trim() !== '') dataLines++;
	}
	if (dataLines === 0) fail('empty-file', name, undefined, 'the file holds only comments.');
	// One header line is allowed on top of MAX_ROWS data rows.
	if (dataLines > MAX_ROWS + 1) {
		fail(
			'too-many-rows',
			name,
			undefined,
			`${dataLines} rows is more than the ${MAX_ROWS} a spectrum may have.`
		);
	}
	const { delimiter, format } = detectDelimiter(lines);
	const rowsIn = splitRows(lines, delimiter);
	const xs = new Float64Array(dataLines);
	const ys = new Float64Array(dataLines);
	const rowNo = new Int32Array(dataLines);
	let n = 0;
	let columns = -1;
	let header: string[] | undefined;
	for (let i = 0; i < rowsIn.length; i++) {
		let fields = rowsIn[i];
		// A blank line, or one of blanks and delimiters only ("  ", ",,"), holds no data.
		if (fields[0].trim() === '' && fields.every((f) => f.trim() === '')) continue;
		// Whitespace-separated exports align columns with runs of spaces and may lead with one.
		if (format === 'whitespace') fields = fields.filter((f) => f !== '');
		// A trailing delimiter ("1,2,") is an export habit, not an extra column.
		if (fields.length > 1 && fields[fields.length - 1].trim() === '') fields = fields.slice(0, -1);
		const line = i + 1;
		if (columns === -1) {
			// The first non-comment row is a header when one of its fields is not a number.
			const isHeader = fields.some((f) => numberOf(f) === 'not-numeric');
			columns = fields.length;
			if (columns < 2 || columns <= Math.max(xCol, yCol)) {
				fail(
					'too-few-columns',
					name,
					line,
					`found ${columns} column${columns === 1 ? '' : 's'}; a spectrum needs x and counts.`
				);
			}
			if (isHeader) {
				header = fields.map((f) => f.trim());
				continue;
			}
		} else if (fields.length !== columns) {
			fail(
				'inconsistent-columns',
				name,
				line,
				`has ${fields.length} columns where the file has ${columns}.`
			);
		}
		const x = numberOf(fields[xCol]);
		const y = numberOf(fields[yCol]);
		if (typeof x !== 'number') refuseField(name, line, xCol, fields[xCol], x);
		if (typeof y !== 'number') refuseField(name, line, yCol, fields[yCol], y);
		xs[n] = x as number;
		ys[n] = y as number;
		rowNo[n] = line;
		n++;
	}
	if (n === 0) fail('header-only', name, undefined, 'the file has a header but no data rows.');
	return finish(
		name,
		format,
		xs.subarray(0, n),
		ys.subarray(0, n),
		rowNo.subarray(0, n),
		'row',
		header?.[xCol],
		header?.[yCol],
		options.minPoints ?? MIN_POINTS
	);
}

function parseJcamp(name: string, text: string, minPoints: number): ParsedSpectrum {
	let result;
	try {
		result = convertJcamp(text);
	} catch (e) {
		fail('jcamp-invalid', name, undefined, `not readable as JCAMP-DX (${(e as Error).message}).`);
	}
	const entry = result.flatten.find((f) => f.spectra && f.spectra.length > 0);
	const spectrum = entry?.spectra[0];
	const data = spectrum?.data as { x?: ArrayLike<number>; y?: ArrayLike<number> } | undefined;
	if (!spectrum || !data?.x || !data?.y || data.x.length === 0) {
		fail(
			'empty-file',
			name,
			undefined,
			'the JCAMP-DX file holds no readable data block (XYDATA or PEAK TABLE).'
		);
	}
	const x = data.x;
	const y = data.y;
	if (x.length !== y.length) {
		fail(
			'inconsistent-columns',
			name,
			undefined,
			`the JCAMP-DX block has ${x.length} x values and ${y.length} y values.`
		);
	}
	if (x.length > MAX_ROWS) {
		fail(
			'too-many-rows',
			name,
			undefined,
			`${x.length} points is more than the ${MAX_ROWS} a spectrum may have.`
		);
	}
	const xs = new Float64Array(x.length);
	const ys = new Float64Array(x.length);
	const rows = new Int32Array(x.length);
	for (let i = 0; i < x.length; i++) {
		const xv = Number(x[i]);
		const yv = Number(y[i]);
		if (!Number.isFinite(xv) || !Number.isFinite(yv)) {
			fail(
				'not-finite',
				name,
				i + 1,
				`the JCAMP-DX value is not a finite number (x=${x[i]}, y=${y[i]}).`,
				'point'
			);
		}
		xs[i] = xv;
		ys[i] = yv;
		rows[i] = i + 1;
	}
	const sp = spectrum as { xUnits?: string; yUnits?: string };
	return finish(name, 'jcamp', xs, ys, rows, 'point', sp.xUnits, sp.yUnits, minPoints);
}

/** Shared checks once the numbers are in: length, duplicates, monotonic x; sorts a descending axis. */
function finish(
	name: string,
	format: FileFormat,
	x: Float64Array,
	y: Float64Array,
	rows: Int32Array,
	unit: 'row' | 'point',
	xLabel: string | undefined,
	yLabel: string | undefined,
	minPoints: number
): ParsedSpectrum {
	const n = x.length;
	if (n < minPoints) {
		fail(
			'too-few-points',
			name,
			undefined,
			`${n} data point${n === 1 ? '' : 's'}; at least ${minPoints} are needed.`
		);
	}
	// The first step fixes the direction; each later step must keep it.
	const descending = x[1] < x[0];
	for (let i = 1; i < n; i++) {
		const d = x[i] - x[i - 1];
		if (d === 0) {
			fail(
				'duplicate-x',
				name,
				rows[i],
				`x = ${x[i]} repeats the value of ${unit} ${rows[i - 1]}.`,
				unit
			);
		}
		if (d < 0 !== descending) {
			fail(
				'non-monotonic-x',
				name,
				rows[i],
				`x = ${x[i]} after ${x[i - 1]} breaks the ${descending ? 'descending' : 'ascending'} order of the axis.`,
				unit
			);
		}
	}
	if (descending) {
		x.reverse();
		y.reverse();
		rows.reverse();
	}
	return {
		file: name,
		format,
		x: Float64Array.from(x),
		y: Float64Array.from(y),
		rows: Int32Array.from(rows),
		xLabel,
		yLabel,
		reversed: descending
	};
}

// ---------------------------------------------------------------------------------------------
// Fast path. Spectrometers write plain unquoted numbers; splitting 2,000 such lines into field
// arrays costs more than the fit of the bands. `scanPlain` reads them character by character
// without allocating per line. It handles only the clean case (an optional header line, comments,
// consistent columns, plain decimal numbers) and returns null on anything else, so every file it
// does not fully understand, and every refusal, goes through papaparse and the checks above.
// parse.spec.ts checks that both paths give identical results.
// ---------------------------------------------------------------------------------------------

const POW10 = Array.from({ length: 23 }, (_, i) => 10 ** i);
let scanPos = 0;

/**
 * A plain decimal number (sign, digits, point, exponent) starting at i, or NaN. With at most 15
 * digits and |exponent| ≤ 22 the value is mantissa × or ÷ an exact power of ten, which is the
 * correctly rounded result (Clinger 1990), i.e. identical to Number(); otherwise Number() decides.
 */
function scanNumber(t: string, i: number, end: number): number {
	const start = i;
	let neg = false;
	let c = t.charCodeAt(i);
	if (c === 45 || c === 43) {
		neg = c === 45;
		c = t.charCodeAt(++i);
	}
	let mant = 0;
	let digits = 0;
	let exp = 0;
	while (i < end && c >= 48 && c <= 57) {
		mant = mant * 10 + (c - 48);
		digits++;
		c = t.charCodeAt(++i);
	}
	if (i < end && c === 46) {
		c = t.charCodeAt(++i);
		while (i < end && c >= 48 && c <= 57) {
			mant = mant * 10 + (c - 48);
			digits++;
			exp--;
			c = t.charCodeAt(++i);
		}
	}
	if (digits === 0) return NaN;
	if (i < end && (c === 101 || c === 69)) {
		c = t.charCodeAt(++i);
		let eneg = false;
		if (c === 45 || c === 43) {
			eneg = c === 45;
			c = t.charCodeAt(++i);
		}
		let e = 0;
		let ed = 0;
		while (i < end && c >= 48 && c <= 57) {
			e = e * 10 + (c - 48);
			ed++;
			c = t.charCodeAt(++i);
		}
		if (ed === 0) return NaN;
		exp += eneg ? -e : e;
	}
	scanPos = i;
	if (digits > 15 || exp > 22 || exp < -22) return Number(t.slice(start, i));
	const v = exp >= 0 ? mant * POW10[exp] : mant / POW10[-exp];
	return neg ? -v : v;
}

function scanPlain(name: string, text: string, options: ParseOptions): ParsedSpectrum | null {
	if (text.includes('"')) return null;
	const xCol = options.xColumn ?? 0;
	const yCol = options.yColumn ?? 1;
	const len = text.length;
	// The delimiter from the first lines, as detectDelimiter does on the full path.
	const head = text.slice(0, 4096).split(/\r\n|\n|\r/);
	const { delimiter, format } = detectDelimiter(head.map((l) => (COMMENT.test(l) ? '' : l)));
	const ws = format === 'whitespace';
	const d = delimiter.charCodeAt(0);
	let cap = 1024;
	let xs = new Float64Array(cap);
	let ys = new Float64Array(cap);
	let rowNo = new Int32Array(cap);
	let n = 0;
	const grow = () => {
		cap *= 2;
		const nx = new Float64Array(cap);
		nx.set(xs);
		xs = nx;
		const ny = new Float64Array(cap);
		ny.set(ys);
		ys = ny;
		const nr = new Int32Array(cap);
		nr.set(rowNo);
		rowNo = nr;
	};
	const twoColumns = !ws && xCol === 0 && yCol === 1;
	let columns = -1;
	let header: string[] | undefined;
	let line = 0;
	let pos = 0;
	while (pos < len) {
		line++;
		// Native indexOf finds the line end far faster than a character loop. A CR before it
		// (CRLF) is not part of the line; CR-only files leave a CR inside, fail the scan below and
		// go the papaparse way.
		let eol = text.indexOf('\n', pos);
		if (eol < 0) eol = len;
		const next = eol + 1;
		if (eol > pos && text.charCodeAt(eol - 1) === 13) eol--;
		let c = 0;
		let i = pos;
		while (i < eol && ((c = text.charCodeAt(i)) === 32 || c === 9)) i++;
		const lineStart = pos;
		pos = next;
		if (i === eol) continue; // blank line
		if (c === 35 || c === 37 || c === 33 || (c === 47 && text.charCodeAt(i + 1) === 47)) continue;
		// The common line of a two-column delimited file, "x,y": read straight through. Anything
		// else on the line (more fields, a trailing delimiter, stray text) takes the general walk
		// below, which decides exactly as before.
		if (twoColumns && columns === 2) {
			let q = lineStart;
			while (q < eol && text.charCodeAt(q) === 32) q++;
			const xv = scanNumber(text, q, eol);
			if (!Number.isNaN(xv)) {
				q = scanPos;
				while (q < eol && ((c = text.charCodeAt(q)) === 32 || c === 9) && c !== d) q++;
				if (q < eol && text.charCodeAt(q) === d) {
					q++;
					while (q < eol && text.charCodeAt(q) === 32) q++;
					const yv = q < eol ? scanNumber(text, q, eol) : NaN;
					if (!Number.isNaN(yv)) {
						q = scanPos;
						while (q < eol && ((c = text.charCodeAt(q)) === 32 || c === 9) && c !== d) q++;
						if (q === eol && Number.isFinite(xv) && Number.isFinite(yv)) {
							if (n === cap) grow();
							xs[n] = xv;
							ys[n] = yv;
							rowNo[n] = line;
							n++;
							if (n > MAX_ROWS) return null;
							continue;
						}
					}
				}
			}
		}
		// Walk the fields: parse the x and y columns, count the rest.
		let field = 0;
		let x = NaN;
		let y = NaN;
		let clean = true;
		let j = ws ? i : lineStart;
		for (;;) {
			if (!ws) while (j < eol && text.charCodeAt(j) === 32) j++;
			let v = NaN;
			let fieldEnd = j;
			const wanted = field === xCol || field === yCol;
			if (wanted) v = scanNumber(text, j, eol);
			if (wanted && !Number.isNaN(v)) {
				fieldEnd = scanPos;
			} else {
				while (fieldEnd < eol && (c = text.charCodeAt(fieldEnd)) !== d && !(ws && c === 9)) {
					if (ws && c === 32) break;
					fieldEnd++;
				}
			}
			let k = fieldEnd;
			while (k < eol && ((c = text.charCodeAt(k)) === 32 || c === 9) && !(c === d && !ws)) k++;
			if (Number.isNaN(v) && (field === xCol || field === yCol)) clean = false;
			if (field === xCol) x = v;
			if (field === yCol) y = v;
			field++;
			if (k >= eol) break;
			if (ws) {
				j = k;
				continue;
			}
			if (text.charCodeAt(k) !== d) {
				clean = false;
				break;
			}
			j = k + 1;
			// A trailing delimiter ("1,2,") is an export habit, not an extra column.
			let m = j;
			while (m < eol && text.charCodeAt(m) === 32) m++;
			if (m >= eol) break;
		}
		if (columns === -1) {
			columns = field;
			if (columns < 2 || columns <= Math.max(xCol, yCol)) return null;
			if (!clean) {
				header = text
					.slice(lineStart, eol)
					.split(ws ? /\s+/ : delimiter)
					.map((f) => f.trim())
					.filter((f, idx, all) => !ws || f !== '' || idx < all.length - 1);
				if (ws && header[0] === '') header.shift();
				if (header.length !== columns) return null;
				continue;
			}
		} else if (field !== columns || !clean) {
			return null;
		}
		if (!Number.isFinite(x) || !Number.isFinite(y)) return null;
		if (n === cap) grow();
		xs[n] = x;
		ys[n] = y;
		rowNo[n] = line;
		n++;
		if (n > MAX_ROWS) return null;
	}
	if (n === 0) return null;
	return finish(
		name,
		format,
		xs.subarray(0, n),
		ys.subarray(0, n),
		rowNo.subarray(0, n),
		'row',
		header?.[xCol],
		header?.[yCol],
		options.minPoints ?? MIN_POINTS
	);
}
