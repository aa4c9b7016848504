import { preparePair, type AnalyzeOptions } from '$lib/thermometry/analyze';
import { parseSpectrum, type ParsedSpectrum } from '$lib/thermometry/parse';
import { EngineError } from '$lib/thermometry/types';

/**
 * The browser-side look at the files before anything is sent: each file through the engine's
 * own parser (so the message is the one the server would give), and, once the laser and the
 * band are known, the pair through the engine's preparation onto the Raman-shift axis.
 */

export type Part = 'stokes' | 'anti_stokes' | 'combined' | 'dark';

export interface LoadedFile {
	part: Part;
	name: string;
	bytes: number;
	text: string;
	parsed?: ParsedSpectrum;
	error?: string;
}

export async function loadFile(part: Part, file: File): Promise<LoadedFile> {
	const text = await file.text();
	const loaded: LoadedFile = { part, name: file.name, bytes: file.size, text };
	try {
		loaded.parsed = parseSpectrum({ name: file.name, text });
	} catch (err) {
		if (!(err instanceof EngineError)) throw err;
		loaded.error = err.message;
	}
	return loaded;
}

export interface Panel {
	title: string;
	x: ArrayLike<number>;
	y: ArrayLike<number>;
	xTitle: string;
	yTitle: string;
	/** ±mode positions to mark, cm⁻¹ (only on the shift axis). */
	marks: number[];
}

export interface Preview {
	panels: Panel[];
	/** True when the windows are on the Raman-shift axis (laser and band known, pair accepted). */
	onShiftAxis: boolean;
	/** Why the pair is not on the shift axis yet, or what the engine refuses about it. */
	note?: string;
	/** A refusal that concerns one file, by part. */
	fileError?: { part: Part | 'files'; message: string };
}

const SIDE_TITLE: Record<Part, string> = {
	stokes: 'Stokes window',
	anti_stokes: 'Anti-Stokes window',
	combined: 'Combined file',
	dark: 'Dark'
};

function rawPanels(files: LoadedFile[]): Panel[] {
	return files
		.filter((f) => f.parsed && f.part !== 'dark')
		.sort((a, b) => (a.part === 'anti_stokes' ? -1 : b.part === 'anti_stokes' ? 1 : 0))
		.map((f) => ({
			title: `${SIDE_TITLE[f.part]} · ${f.name}`,
			x: f.parsed!.x,
			y: f.parsed!.y,
			xTitle: f.parsed!.xLabel ? `${f.parsed!.xLabel} (as in the file)` : 'x (as in the file)',
			yTitle: f.parsed!.yLabel ?? 'counts',
			marks: []
		}));
}

export function preview(
	files: LoadedFile[],
	options: Partial<AnalyzeOptions>,
	dark: number | undefined
): Preview {
	const by = (p: Part) => files.find((f) => f.part === p && !f.error);
	const combined = by('combined');
	const pairReady = combined || (by('stokes') && by('anti_stokes'));
	const raw = { panels: rawPanels(files), onShiftAxis: false };
	if (!pairReady) return raw;
	if (!options.laserNm || !options.modes?.length) {
		return {
			...raw,
			note: 'Enter the laser wavelength and the band to see the pair on the Raman-shift axis.'
		};
	}
	const text = (f?: LoadedFile) => (f ? { name: f.name, text: f.text } : undefined);
	try {
		const pair = preparePair(
			{
				combined: text(combined),
				stokes: combined ? undefined : text(by('stokes')),
				antiStokes: combined ? undefined : text(by('anti_stokes')),
				dark: text(by('dark')) ?? dark
			},
			options as AnalyzeOptions
		);
		const marks = options.modes;
		return {
			onShiftAxis: true,
			panels: [
				{ title: 'Anti-Stokes', w: pair.antiStokes, sign: -1 },
				{ title: 'Stokes', w: pair.stokes, sign: 1 }
			].map(({ title, w, sign }) => ({
				title: `${title} · ${w.window.source}`,
				x: w.window.shift,
				y: w.window.rate,
				xTitle: 'Raman shift (cm⁻¹)',
				yTitle: 'counts/s per pixel, dark removed',
				marks: marks.map((m) => sign * m)
			}))
		};
	} catch (err) {
		if (!(err instanceof EngineError)) throw err;
		const file = files.find((f) => f.name === err.details.file);
		return {
			...raw,
			note: err.message,
			fileError: { part: file?.part ?? 'files', message: err.message }
		};
	}
}
