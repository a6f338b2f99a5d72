// The API names the field in a 400 message ("name: a setup called … exists"); forms show it beside that field.

/** Splits "field: message" into its parts; a message without a field stays whole. */
export function fieldError(message: string): { field: string | null; text: string } {
	const m = /^([A-Za-z_][\w.[\]]*)\s*:\s*(.+)$/s.exec(message.trim());
	if (!m) return { field: null, text: message };
	return { field: m[1].split('.')[0].replace(/\[\d+\]$/, ''), text: m[2] };
}

/** A number from a form field: the number when it parses, else the raw text (so the API names the problem). */
export function numberField(form: FormData, name: string): number | string | undefined {
	const v = form.get(name);
	if (typeof v !== 'string' || v.trim() === '') return undefined;
	const n = Number(v);
	return Number.isFinite(n) ? n : v;
}
