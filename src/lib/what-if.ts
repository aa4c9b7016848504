/**
 * The reading page's what-if panel: the stored reading's files re-run through the engine with
 * some settings changed, in the browser, without touching the stored reading.
 *
 * A lineshape, exponent or mode change moves the fit, so those run the whole pipeline
 * (`analyzePairDetailed`, the worker's own entry). The stored prepared windows carry no variances,
 * so the raw files are the only input that gives the worker's figures. u(C) and k do not enter
 * the fit (C is held fixed in it; u(C) only enters the budget), so they re-combine the fitted
 * reading's budget with the engine's own `combine`/`weightedMean`/`expanded`. Monte Carlo is left
 * out: it does not change T, u(T) or U.
 */
import { analysisOptions, pairInputs, type FilePart } from './analysis-options';
import { modesOf, type MeasurementMetadata, type ReanalysisSettings } from './measurement-metadata';
import { analyzePairDetailed, type FileText } from './thermometry/analyze';
import { combine, expanded } from './thermometry/budget';
import { sharedInputs } from './thermometry/estimate';
import { weightedMean } from './thermometry/modes';
import type { Detector, Lineshape, ModeResult, Reading } from './thermometry/types';

/** What a reviewer may change in the panel. */
export interface WhatIfChoice {
	lineshape: Lineshape;
	detector: Detector;
	/** The modes kept (a subset of the reading's). */
	modes: number[];
	u_c_factor: number;
	coverage_factor: number;
}

/** The panel's starting point: the settings the shown reading was made with. */
export function choiceOf(settings: MeasurementMetadata): WhatIfChoice {
	return {
		lineshape: settings.lineshape,
		detector: settings.detector,
		modes: modesOf(settings),
		u_c_factor: settings.u_c_factor,
		coverage_factor: settings.coverage_factor
	};
}

/** The choice as re-analysis settings (what the re-analyse action takes). */
export function asReanalysis(choice: WhatIfChoice): ReanalysisSettings {
	return { ...choice, modes: [...choice.modes] };
}

/** The full pipeline with the choice applied, as a re-analysis would merge it. */
export function refit(
	files: Partial<Record<FilePart, FileText>>,
	settings: MeasurementMetadata,
	choice: WhatIfChoice
): Reading {
	const merged = { ...settings, ...asReanalysis(choice), monte_carlo: undefined };
	return analyzePairDetailed(pairInputs(files, merged), analysisOptions(merged)).reading;
}

/** The fitted reading's budget with u(C) and k replaced (nothing in the fit depends on them). */
export function rebudget(reading: Reading, uC: number, k: number): Reading {
	const modes: ModeResult[] = reading.modes.map((m) => {
		if (m.temperature_k === null) return m;
		const b = combine(
			m.budget.map((row) => (row.input === 'c_factor' ? { ...row, standard_uncertainty: uC } : row))
		);
		return { ...m, budget: b.rows, u_temperature_k: b.u_c };
	});
	const good = modes.filter((m) => m.temperature_k !== null);
	const out: Reading = { ...reading, modes, coverage_factor: k };
	if (good.length === 1) {
		out.temperature_k = good[0].temperature_k;
		out.u_temperature_k = good[0].u_temperature_k;
		out.budget = good[0].budget;
	} else if (good.length > 1) {
		const c = good[0].budget.find((r) => r.input === 'c_factor');
		const wm = weightedMean(
			good.map((m) => ({
				modeCm1: m.mode_cm1,
				temperatureK: m.temperature_k!,
				budget: m.budget
			})),
			sharedInputs([{ kind: 'constant', c: c?.value ?? 1, u_c: uC }])
		);
		out.temperature_k = wm.temperatureK;
		out.u_temperature_k = wm.uTemperatureK;
		out.budget = wm.budget;
		out.birge_ratio = wm.birgeRatio;
	}
	out.expanded_uncertainty_k =
		out.u_temperature_k === null ? null : expanded(out.u_temperature_k, k);
	return out;
}

const fitKey = (c: WhatIfChoice) => JSON.stringify([c.lineshape, c.detector, c.modes]);

/**
 * A what-if evaluator for one measurement: refits only when the fit's inputs change, and
 * re-combines the budget otherwise. Throws the engine's `EngineError` for a refused choice.
 */
export function whatIf(files: Partial<Record<FilePart, FileText>>, settings: MeasurementMetadata) {
	let last: { key: string; reading: Reading } | null = null;
	return (choice: WhatIfChoice): Reading => {
		const key = fitKey(choice);
		if (last?.key !== key) last = { key, reading: refit(files, settings, choice) };
		return rebudget(last.reading, choice.u_c_factor, choice.coverage_factor);
	};
}
