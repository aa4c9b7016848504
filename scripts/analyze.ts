/**
 * Command line for offline use and acquisition PCs (issue 3 item 9):
 *
 *   npm run --silent analyze -- --stokes S.csv --anti-stokes AS.csv --laser-nm 532 --mode 520.7 \
 *     --c-factor 1 --u-c-factor 0.02 --json
 *   npm run --silent analyze -- --batch map.json            # one JSON line per case, in order
 *
 * A refused input prints {"error": {"code", "message"}} and exits 2, never a temperature.
 * In batch mode every case gets its line (a reading or an error) and the exit code is 2 when any
 * case was refused, 0 otherwise. Options are validated with zod; unknown options are refused so a
 * typo cannot silently fall back to a default.
 */
import { readFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { z } from 'zod';
import {
	analyzePair,
	jsonReplacer,
	type AnalyzeOptions,
	type DarkSource,
	type PairInputs
} from '../src/lib/thermometry/analyze';
import { formatTemperature, roundToUncertainty } from '../src/lib/thermometry/format';
import { EngineError, type Reading } from '../src/lib/thermometry/types';

const BOOLEAN_OPTIONS = new Set(['json', 'allow-saturated-band', 'no-spikes', 'help']);
const REPEATABLE_OPTIONS = new Set(['mode']);

const num = z.coerce.number().refine(Number.isFinite, 'must be a finite number');
const positive = num.refine((v) => v > 0, 'must be positive');
const nonNegative = num.refine((v) => v >= 0, 'must be zero or positive');
const bool = z.union([z.boolean(), z.enum(['true', 'false']).transform((v) => v === 'true')]);

/** One case: the long option names without `--` (the same keys a batch file uses). */
export const caseSchema = z
	.object({
		id: z.unknown().optional(),
		stokes: z.string().min(1).optional(),
		'anti-stokes': z.string().min(1).optional(),
		combined: z.string().min(1).optional(),
		'laser-nm': positive,
		mode: z
			.union([positive, z.array(positive)])
			.transform((m) => (Array.isArray(m) ? m : [m]))
			.refine((m) => m.length > 0, 'give at least one mode'),
		detector: z.enum(['photon-counting', 'energy']).default('photon-counting'),
		lineshape: z.enum(['lorentzian', 'gaussian', 'pseudo-voigt']).default('lorentzian'),
		'exposure-stokes': positive.optional(),
		'exposure-anti-stokes': positive.optional(),
		'dark-exposure': positive.optional(),
		dark: z.union([z.number(), z.string().min(1)]).optional(),
		'dark-stokes': z.union([z.number(), z.string().min(1)]).optional(),
		'dark-anti-stokes': z.union([z.number(), z.string().min(1)]).optional(),
		'x-axis': z.enum(['auto', 'raman-shift', 'wavenumber', 'wavelength']).default('auto'),
		'c-factor': positive.optional(),
		'u-c-factor': nonNegative.optional(),
		response: z.string().min(1).optional(),
		'u-response': nonNegative.optional(),
		'reference-ratio': positive.optional(),
		'u-reference-ratio': nonNegative.optional(),
		t0: positive.optional(),
		'u-t0': nonNegative.optional(),
		'monte-carlo': z.coerce.number().int().min(100).max(10_000_000).optional(),
		seed: z.coerce.number().int().optional(),
		'coverage-factor': positive.optional(),
		'filter-cutoff': nonNegative.optional(),
		'u-mode': nonNegative.optional(),
		'u-laser': nonNegative.optional(),
		method: z.enum(['joint-fit', 'separate-bands']).optional(),
		baseline: z.enum(['none', 'polynomial', 'als']).default('none'),
		'baseline-order': z.coerce.number().int().min(0).max(8).optional(),
		saturation: positive.optional(),
		'allow-saturated-band': bool.optional(),
		'no-spikes': bool.optional(),
		'read-noise': nonNegative.optional(),
		json: bool.optional()
	})
	.strict()
	.superRefine((c, ctx) => {
		const need = (cond: boolean, message: string) => {
			if (!cond) ctx.addIssue({ code: 'custom', message });
		};
		const pair = c.stokes !== undefined || c['anti-stokes'] !== undefined;
		need(pair !== (c.combined !== undefined), 'give --stokes and --anti-stokes, or --combined');
		if (pair) need(!!c.stokes && !!c['anti-stokes'], 'give both --stokes and --anti-stokes');
		const ways = [
			c['c-factor'] !== undefined,
			c.response !== undefined,
			c['reference-ratio'] !== undefined
		];
		need(
			ways.filter(Boolean).length === 1,
			'give the response ratio one way: --c-factor X --u-c-factor U, --response FILE --u-response REL, or --reference-ratio R --u-reference-ratio U --t0 K --u-t0 K'
		);
		if (c['c-factor'] !== undefined)
			need(c['u-c-factor'] !== undefined, '--c-factor needs --u-c-factor');
		if (c.response !== undefined)
			need(c['u-response'] !== undefined, '--response needs --u-response');
		if (c['reference-ratio'] !== undefined) {
			need(
				c['u-reference-ratio'] !== undefined && c.t0 !== undefined && c['u-t0'] !== undefined,
				'--reference-ratio needs --u-reference-ratio, --t0 and --u-t0'
			);
		}
	});
export type CaseOptions = z.infer<typeof caseSchema>;

/** argv → raw option object; `--mode` may repeat; `--key=value` and `--key value` both work. */
export function parseArgv(argv: string[]): Record<string, unknown> {
	const out: Record<string, unknown> = {};
	for (let i = 0; i < argv.length; i++) {
		const arg = argv[i];
		if (!arg.startsWith('--')) {
			throw new EngineError(
				'invalid-option',
				`Unexpected argument "${arg}"; options start with --.`
			);
		}
		let key = arg.slice(2);
		let value: unknown;
		const eq = key.indexOf('=');
		if (eq >= 0) {
			value = key.slice(eq + 1);
			key = key.slice(0, eq);
		} else if (BOOLEAN_OPTIONS.has(key)) {
			value = true;
		} else {
			if (i + 1 >= argv.length) throw new EngineError('invalid-option', `--${key} needs a value.`);
			value = argv[++i];
		}
		if (REPEATABLE_OPTIONS.has(key)) {
			// Also accept "--mode 520.7,302" for convenience.
			const parts = String(value)
				.split(',')
				.filter((s) => s.trim() !== '');
			out[key] = [...((out[key] as string[]) ?? []), ...parts];
		} else {
			if (key in out) throw new EngineError('invalid-option', `--${key} is given twice.`);
			out[key] = value;
		}
	}
	return out;
}

function validate(raw: Record<string, unknown>): CaseOptions {
	const r = caseSchema.safeParse(raw);
	if (r.success) return r.data;
	const issue = r.error.issues[0];
	const where = issue.path.length ? `--${issue.path.join('.')}: ` : '';
	throw new EngineError('invalid-option', `${where}${issue.message}`);
}

/** Files are read through this cache so a batch reads a shared dark or response file once. */
type Reader = (path: string) => string;

function readerWithCache(): Reader {
	const cache = new Map<string, string>();
	return (path) => {
		const hit = cache.get(path);
		if (hit !== undefined) return hit;
		let text: string;
		try {
			text = readFileSync(path, 'utf8');
		} catch (e) {
			const code = (e as NodeJS.ErrnoException).code;
			throw new EngineError(
				'file-unreadable',
				`${path}: ${code === 'ENOENT' ? 'no such file' : `cannot be read (${code ?? (e as Error).message})`}.`,
				{ file: path }
			);
		}
		if (cache.size < 64) cache.set(path, text);
		return text;
	};
}

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** A case's options → the pipeline's inputs and options (paths resolved against `baseDir`). */
export function toPipeline(
	c: CaseOptions,
	baseDir: string,
	read: Reader
): { inputs: PairInputs; options: AnalyzeOptions } {
	const file = (p: string | undefined) => {
		if (p === undefined) return undefined;
		const path = resolve(baseDir, p);
		return { name: p, text: read(path) };
	};
	const dark = (d: number | string | undefined): DarkSource | undefined => {
		if (d === undefined) return undefined;
		if (typeof d === 'number') return d;
		return NUMBER.test(d.trim()) ? Number(d) : file(d);
	};
	const inputs: PairInputs = {
		stokes: file(c.stokes),
		antiStokes: file(c['anti-stokes']),
		combined: file(c.combined),
		dark: dark(c.dark),
		darkStokes: dark(c['dark-stokes']),
		darkAntiStokes: dark(c['dark-anti-stokes']),
		responseCurve: file(c.response)
	};
	const options: AnalyzeOptions = {
		laserNm: c['laser-nm'],
		modes: c.mode,
		detector: c.detector,
		lineshape: c.lineshape,
		exposureStokesS: c['exposure-stokes'],
		exposureAntiStokesS: c['exposure-anti-stokes'],
		darkExposureS: c['dark-exposure'],
		xAxis: c['x-axis'],
		response:
			c['c-factor'] !== undefined
				? { kind: 'constant', c: c['c-factor'], u_c: c['u-c-factor'] ?? 0 }
				: c['reference-ratio'] !== undefined
					? {
							kind: 'reference',
							ratio: c['reference-ratio'],
							u_ratio: c['u-reference-ratio'] ?? 0,
							t0_k: c.t0 ?? NaN,
							u_t0_k: c['u-t0'] ?? 0
						}
					: undefined,
		uResponseRelative: c['u-response'],
		coverageFactor: c['coverage-factor'],
		monteCarlo: c['monte-carlo'] ? { trials: c['monte-carlo'], seed: c.seed } : undefined,
		filterCutoffCm1: c['filter-cutoff'],
		uModeCm1: c['u-mode'],
		uLaserCm1: c['u-laser'],
		method: c.method,
		saturationCounts: c.saturation,
		allowSaturatedBand: c['allow-saturated-band'],
		removeSpikes: c['no-spikes'] ? false : undefined,
		readNoiseCounts: c['read-noise'],
		baseline:
			c.baseline === 'polynomial'
				? { kind: 'polynomial', order: c['baseline-order'] }
				: c.baseline === 'als'
					? { kind: 'als' }
					: { kind: 'none' }
	};
	return { inputs, options };
}

function errorJson(e: unknown): {
	error: { code: string; message: string; file?: string; row?: number };
} {
	if (e instanceof EngineError) {
		return { error: { code: e.code, message: e.message, ...e.details } };
	}
	return { error: { code: 'internal-error', message: (e as Error)?.message ?? String(e) } };
}

/** A short summary for a person: T ± U with k and °C, the largest budget rows, the flags. */
export function summary(reading: Reading): string {
	const lines: string[] = [];
	if (reading.temperature_k === null || reading.expanded_uncertainty_k === null) {
		lines.push('No temperature can be given:');
	} else {
		lines.push(
			`T = ${formatTemperature(reading.temperature_k, reading.expanded_uncertainty_k, reading.coverage_factor)}`
		);
	}
	lines.push(
		`    ${reading.method}, exponent ${reading.exponent}, ${reading.lineshape}, laser ${reading.laser_nm} nm`
	);
	for (const m of reading.modes) {
		const t =
			m.temperature_k !== null && m.u_temperature_k !== null
				? (() => {
						const r = roundToUncertainty(m.temperature_k, m.u_temperature_k);
						return `${r.value} K, u = ${r.uncertainty} K`;
					})()
				: 'no temperature';
		lines.push(`    mode ${m.mode_cm1} cm⁻¹ (fitted ${m.shift_cm1.toFixed(2)} cm⁻¹): ${t}`);
	}
	const mc = reading.monte_carlo;
	if (mc) {
		const r = roundToUncertainty(mc.mean_k, mc.sd_k);
		const lo = roundToUncertainty(mc.interval_95_k[0], mc.sd_k).value;
		const hi = roundToUncertainty(mc.interval_95_k[1], mc.sd_k).value;
		lines.push(
			`    Monte Carlo (JCGM 101, ${mc.trials} trials): ${r.value} K, s.d. ${r.uncertainty} K, shortest 95 % interval [${lo}, ${hi}] K`
		);
	}
	const rows = [...reading.budget]
		.filter((r) => r.variance_share > 0)
		.sort((a, b) => b.variance_share - a.variance_share)
		.slice(0, 3);
	if (rows.length) {
		lines.push('Largest uncertainty contributions:');
		for (const r of rows) {
			lines.push(
				`    ${r.label.padEnd(40)} ${r.contribution_k.toPrecision(2).padStart(8)} K  ${(100 * r.variance_share).toFixed(0).padStart(3)} %`
			);
		}
	}
	if (reading.flags.length) {
		lines.push('Flags:');
		for (const f of reading.flags) lines.push(`    [${f.severity}] ${f.code}: ${f.message}`);
	}
	return lines.join('\n');
}

export interface CliIo {
	out: (text: string) => void;
	err: (text: string) => void;
	cwd: string;
}

const HELP = `Usage: npm run --silent analyze -- (--stokes FILE --anti-stokes FILE | --combined FILE)
  --laser-nm N --mode CM1 [--mode CM1 …] (--c-factor X --u-c-factor U | --response FILE --u-response REL)
  [--detector photon-counting|energy] [--lineshape lorentzian|gaussian|pseudo-voigt]
  [--exposure-stokes S] [--exposure-anti-stokes S] [--dark FILE|COUNTS] [--monte-carlo M] [--json]
  or: --batch FILE (a JSON array of cases keyed by these option names without --)`;

function runCase(raw: Record<string, unknown>, baseDir: string, read: Reader): Reading {
	const c = validate(raw);
	const { inputs, options } = toPipeline(c, baseDir, read);
	return analyzePair(inputs, options);
}

/** Run the command line; returns the exit code. Exported so the benchmark runs the same path. */
export function runCli(argv: string[], io: CliIo): number {
	const read = readerWithCache();
	let raw: Record<string, unknown>;
	try {
		raw = parseArgv(argv);
	} catch (e) {
		io.out(JSON.stringify(errorJson(e)));
		return 2;
	}
	if (raw.help) {
		io.out(HELP);
		return 0;
	}
	if (raw.batch !== undefined) {
		const { batch, json: _json, ...defaults } = raw;
		const path = resolve(io.cwd, String(batch));
		let cases: unknown;
		try {
			cases = JSON.parse(read(path));
		} catch (e) {
			io.out(
				JSON.stringify(
					e instanceof EngineError
						? errorJson(e)
						: {
								error: {
									code: 'invalid-batch',
									message: `${batch}: not valid JSON (${(e as Error).message}).`
								}
							}
				)
			);
			return 2;
		}
		if (
			!Array.isArray(cases) ||
			cases.some((c) => typeof c !== 'object' || c === null || Array.isArray(c))
		) {
			io.out(
				JSON.stringify({
					error: {
						code: 'invalid-batch',
						message: `${batch}: must be a JSON array of case objects.`
					}
				})
			);
			return 2;
		}
		const baseDir = dirname(path);
		let refused = false;
		for (const c of cases as Record<string, unknown>[]) {
			const id = c.id;
			try {
				// Command-line options are defaults; a case's own keys win.
				const reading = runCase({ ...defaults, ...c }, baseDir, read);
				io.out(JSON.stringify(id === undefined ? reading : { id, ...reading }, jsonReplacer));
			} catch (e) {
				refused = true;
				io.out(JSON.stringify(id === undefined ? errorJson(e) : { id, ...errorJson(e) }));
			}
		}
		return refused ? 2 : 0;
	}
	try {
		const reading = runCase(raw, io.cwd, read);
		io.out(raw.json ? JSON.stringify(reading, jsonReplacer) : summary(reading));
		return 0;
	} catch (e) {
		io.out(JSON.stringify(errorJson(e)));
		if (!(e instanceof EngineError)) {
			io.err(String((e as Error)?.stack ?? e));
			return 1;
		}
		return 2;
	}
}

if (process.argv[1] && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
	// Buffer output: thousands of batch lines through console.log would dominate the run time.
	const chunks: string[] = [];
	let size = 0;
	const flush = () => {
		if (chunks.length) process.stdout.write(chunks.join(''));
		chunks.length = 0;
		size = 0;
	};
	const code = runCli(process.argv.slice(2), {
		out: (t) => {
			chunks.push(t + '\n');
			size += t.length;
			if (size > 1 << 16) flush();
		},
		err: (t) => process.stderr.write(t + '\n'),
		// `npm run` switches to the package folder; INIT_CWD is where the user typed the command,
		// which is what relative file names mean to them.
		cwd: process.env.INIT_CWD ?? process.cwd()
	});
	flush();
	process.exitCode = code;
}
