import type { AnalyzeOptions, FileText, PairInputs } from './thermometry/analyze';
import { modesOf, type MeasurementMetadata } from './measurement-metadata';

/** The engine options a measurement's metadata stands for. Shared by the worker and the browser. */
export function analysisOptions(m: MeasurementMetadata): AnalyzeOptions {
	return {
		laserNm: m.laser_nm,
		modes: modesOf(m),
		detector: m.detector,
		lineshape: m.lineshape,
		// One exposure given stands for both windows (always so for a combined file).
		exposureStokesS: m.exposure_stokes_s ?? m.exposure_anti_stokes_s,
		exposureAntiStokesS: m.exposure_anti_stokes_s ?? m.exposure_stokes_s,
		xAxis: m.x_axis,
		baseline: { kind: m.baseline ?? 'none' },
		response: { kind: 'constant', c: m.c_factor, u_c: m.u_c_factor },
		filterCutoffCm1: m.filter_cutoff_cm1,
		coverageFactor: m.coverage_factor,
		uModeCm1: m.u_mode_cm1,
		uLaserCm1: m.u_laser_cm1,
		monteCarlo: m.monte_carlo ? { trials: m.monte_carlo, seed: 1 } : undefined
	};
}

export type FilePart = 'stokes' | 'anti_stokes' | 'combined' | 'dark';

/** A measurement's stored files as the engine takes them; shared by the worker and the panel. */
export function pairInputs(
	files: Partial<Record<FilePart, FileText>>,
	settings: Pick<MeasurementMetadata, 'dark_counts'>
): PairInputs {
	return {
		stokes: files.stokes,
		antiStokes: files.anti_stokes,
		combined: files.combined,
		dark: files.dark ?? settings.dark_counts
	};
}
