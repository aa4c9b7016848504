/**
 * The analyze command line as a child process (issue 3 item 9), on the synthetic fixtures of
 * known temperature (fixtures/spectra/truth.json, made by scripts/make-fixtures.ts).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const root = new URL('..', import.meta.url).pathname;
const fixtures = join(root, 'fixtures', 'spectra');
const truth = JSON.parse(readFileSync(join(fixtures, 'truth.json'), 'utf8')) as {
	id: string;
	true_temperature_k: number;
}[];

function cli(args: string[], cwd = fixtures) {
	const r = spawnSync('npx', ['tsx', join(root, 'scripts', 'analyze.ts'), ...args], {
		cwd,
		encoding: 'utf8'
	});
	return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

const si532 = [
	'--stokes',
	'si-532-stokes.csv',
	'--anti-stokes',
	'si-532-anti-stokes.csv',
	'--laser-nm',
	'532',
	'--mode',
	'520.7',
	'--exposure-stokes',
	'1',
	'--exposure-anti-stokes',
	'4',
	'--dark',
	'300',
	'--c-factor',
	'1',
	'--u-c-factor',
	'0.02'
];

describe('analyze CLI', () => {
	it('--json turns a fixture pair of known T into a reading', () => {
		const r = cli([...si532, '--json']);
		expect(r.code).toBe(0);
		const j = JSON.parse(r.stdout);
		const t = truth.find((x) => x.id === 'si-532')!.true_temperature_k;
		expect(Math.abs(j.temperature_k - t)).toBeLessThan(j.expanded_uncertainty_k);
		expect(j.coverage_factor).toBe(2);
		expect(j.method).toBe('joint-fit');
		expect(j.modes[0].stokes.area).toBeGreaterThan(0);
		expect(j.modes[0].anti_stokes.u_area).toBeGreaterThan(0);
		expect(j.budget.length).toBeGreaterThan(0);
		expect(Array.isArray(j.flags)).toBe(true);
	});

	it('without --json prints a short summary with T ± U, k and °C', () => {
		const r = cli(si532);
		expect(r.code).toBe(0);
		expect(r.stdout).toMatch(/^T = \d+(\.\d+)? K ± \d+(\.\d+)? K \(k = 2\)/);
		expect(r.stdout).toContain('°C');
		expect(r.stdout).toContain('Largest uncertainty contributions');
	});

	it('a broken file exits 2 with an error JSON and no temperature', () => {
		const r = cli([
			'--stokes',
			'broken-not-numeric.csv',
			'--anti-stokes',
			'si-532-anti-stokes.csv',
			'--laser-nm',
			'532',
			'--mode',
			'520.7',
			'--c-factor',
			'1',
			'--u-c-factor',
			'0.02',
			'--json'
		]);
		expect(r.code).toBe(2);
		const j = JSON.parse(r.stdout);
		expect(j.error.code).toBe('not-numeric');
		expect(j.error.message).toContain('broken-not-numeric.csv, row 19');
		expect(r.stdout).not.toContain('temperature_k');
	});

	it('an invalid option exits 2 with an error JSON', () => {
		const r = cli([...si532, '--detector', 'bolometer']);
		expect(r.code).toBe(2);
		expect(JSON.parse(r.stdout).error.code).toBe('invalid-option');
	});

	it('--batch prints one line per case, in order, echoing id; paths relative to the batch file', () => {
		const cases = JSON.parse(readFileSync(join(fixtures, 'cases.json'), 'utf8')) as {
			id: string;
		}[];
		const dir = mkdtempSync(join(tmpdir(), 'phonotherm-batch-'));
		// Paths in the batch are relative to the batch file, not to the working directory.
		const rel = (p: unknown) =>
			typeof p === 'string' && /\.(csv|tsv|jdx)$/.test(p) ? join(fixtures, p) : p;
		const batch = [
			...cases.map((c) =>
				Object.fromEntries(Object.entries(c).map(([k, v]) => [k, k === 'id' ? v : rel(v)]))
			),
			{
				...cases[0],
				id: 'broken',
				stokes: join(fixtures, 'broken-not-numeric.csv'),
				'anti-stokes': join(fixtures, 'si-532-anti-stokes.csv')
			},
			{
				...cases[1],
				id: 42,
				stokes: join(fixtures, 'diamond-633-stokes.tsv'),
				'anti-stokes': join(fixtures, 'diamond-633-anti-stokes.tsv')
			}
		];
		writeFileSync(join(dir, 'batch.json'), JSON.stringify(batch));
		const r = cli(['--batch', join(dir, 'batch.json')], root);
		const lines = r.stdout
			.trim()
			.split('\n')
			.map((l) => JSON.parse(l));
		expect(lines.map((l) => l.id)).toEqual([...cases.map((c) => c.id), 'broken', 42]);
		for (const l of lines.slice(0, cases.length)) {
			const t = truth.find((x) => x.id === l.id)!.true_temperature_k;
			expect(Math.abs(l.temperature_k - t)).toBeLessThan(l.expanded_uncertainty_k);
		}
		expect(lines[cases.length].error.code).toBe('not-numeric');
		expect(lines[cases.length]).not.toHaveProperty('temperature_k');
		// A refused case makes the batch exit 2; the other cases still get their readings.
		expect(r.code).toBe(2);

		// The fixture batch itself uses paths relative to its own folder, run from elsewhere.
		const own = cli(['--batch', join(fixtures, 'cases.json'), '--coverage-factor', '3'], root);
		expect(own.code).toBe(0);
		const ownLines = own.stdout
			.trim()
			.split('\n')
			.map((l) => JSON.parse(l));
		expect(ownLines.map((l) => l.id)).toEqual(cases.map((c) => c.id));
		// Options on the command line are defaults for every case of the batch.
		for (const l of ownLines) expect(l.coverage_factor).toBe(3);
	});
});
