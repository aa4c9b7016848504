/**
 * The estimator's entry point: a prepared Stokes/anti-Stokes pair in, a Reading out.
 * (Signature committed first so the pipeline can build against it; body follows.)
 */
import {
	EngineError,
	type Lineshape,
	type PreparedWindow,
	type Reading,
	type ResponseSource
} from './types';

export interface EstimateOptions {
	laserNm: number;
	modes: number[];
	exponent: 3 | 4;
	lineshape: Lineshape;
	response: ResponseSource;
	coverageFactor?: number;
	monteCarlo?: { trials: number; seed?: number };
	filterCutoffCm1?: number;
	uModeCm1?: number;
	uLaserCm1?: number;
	method?: 'joint-fit' | 'separate-bands';
}

export function estimate(
	_stokes: PreparedWindow,
	_antiStokes: PreparedWindow,
	_opts: EstimateOptions
): Reading {
	throw new EngineError('not-implemented', 'The estimator is being built.');
}
