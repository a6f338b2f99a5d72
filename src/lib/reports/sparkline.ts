// A tiny line chart as an SVG path, for the report page and the HTML e-mail (mail clients draw
// inline SVG poorly or not at all, so the text part carries the same numbers).

/** Path through the values scaled into width × height (gaps in null values break the line). */
export function sparkPath(values: readonly (number | null)[], width: number, height: number, max?: number): string {
	const known = values.filter((v): v is number => v !== null && Number.isFinite(v));
	if (known.length === 0) return '';
	const top = max ?? Math.max(...known);
	const scale = top > 0 ? (height - 2) / top : 0;
	// A single bucket is drawn as a level line across the box, so one value still shows.
	if (values.length === 1) {
		const y = (height - 1 - known[0] * scale).toFixed(1);
		return `M0.0 ${y} L${width.toFixed(1)} ${y}`;
	}
	const step = width / (values.length - 1);
	let d = '';
	let pen = false;
	values.forEach((v, i) => {
		if (v === null || !Number.isFinite(v)) {
			pen = false;
			return;
		}
		const x = (i * step).toFixed(1);
		const y = (height - 1 - v * scale).toFixed(1);
		d += `${pen ? 'L' : 'M'}${x} ${y} `;
		pen = true;
	});
	return d.trim();
}

/** The inline SVG of a sparkline of observed against predicted values, both on one scale. */
export function sparkSvg(observed: readonly (number | null)[], predicted: readonly (number | null)[], width = 240, height = 40): string {
	const all = [...observed, ...predicted].filter((v): v is number => v !== null && Number.isFinite(v));
	const max = all.length ? Math.max(...all) : 1;
	const obs = sparkPath(observed, width, height, max);
	const pred = sparkPath(predicted, width, height, max);
	return (
		`<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" role="img" aria-label="switching rate">` +
		(pred ? `<path d="${pred}" fill="none" stroke="#80570c" stroke-width="1" stroke-dasharray="3 2"/>` : '') +
		(obs ? `<path d="${obs}" fill="none" stroke="#22695f" stroke-width="1.5"/>` : '') +
		`</svg>`
	);
}
