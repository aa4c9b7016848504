// Plotly touches `self` on import, so it is loaded in the browser only, once, on first use.
import type PlotlyDefault from 'plotly.js-dist-min';
import type { Config, Data, Layout, LayoutAxis } from 'plotly.js-dist-min';

type PlotlyModule = typeof PlotlyDefault;

let loading: Promise<PlotlyModule> | undefined;

export function loadPlotly(): Promise<PlotlyModule> {
	loading ??= import('plotly.js-dist-min').then((m) => m.default);
	return loading;
}

/** Our colours for plots (tailwind.config.ts), so charts match the page. */
export const COLOURS = {
	ink900: '#22262f',
	ink600: '#515c71',
	ink400: '#8592a6',
	ink200: '#d5d9e1',
	ink100: '#eceef2',
	ember600: '#a84a1e',
	ember400: '#df7b45',
	steel: '#2f6f8f',
	fault: '#b3261e'
};

export const FONT = {
	family: '"Inter Variable", system-ui, sans-serif',
	size: 12,
	color: COLOURS.ink600
};
export const MONO = '"JetBrains Mono", ui-monospace, monospace';

export const baseLayout: Partial<Layout> = {
	font: FONT,
	paper_bgcolor: 'white',
	plot_bgcolor: 'white',
	hoverlabel: { font: { family: MONO, size: 11 } },
	margin: { l: 64, r: 16, t: 24, b: 48 }
};

export const axis = (title: string, extra: Partial<LayoutAxis> = {}): Partial<LayoutAxis> => ({
	title: { text: title, font: { size: 12 } },
	gridcolor: COLOURS.ink100,
	linecolor: COLOURS.ink200,
	zerolinecolor: COLOURS.ink200,
	tickfont: { family: MONO, size: 11 },
	...extra
});

export const config: Partial<Config> = {
	displaylogo: false,
	responsive: true,
	modeBarButtonsToRemove: ['lasso2d', 'select2d', 'autoScale2d']
};

/**
 * A figure drawn once as an SVG data URL, for print: vector on paper, a fixed size the page's
 * layout cannot change, no toolbar. WebGL traces do not survive it; give SVG ones.
 */
export async function stillPicture(
	data: Data[],
	layout: Partial<Layout>,
	width: number,
	height: number
): Promise<string> {
	const Plotly = await loadPlotly();
	return Plotly.toImage(
		{ data, layout: { ...layout, width, height } },
		{ format: 'svg', width, height }
	);
}

/** Width of a still picture in CSS px: A4 less 15 mm margins is about 680 px. */
export const STILL_WIDTH = 680;
