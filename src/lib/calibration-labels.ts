/** Names of the ways a response calibration is made, for the screens. */
export const CALIBRATION_METHOD_LABELS: Record<string, string> = {
	constant: 'Constant',
	'reference-run': 'Reference run',
	'response-curve': 'Response curve',
	lamp: 'White-light lamp'
};
