// A small MIME reader for the mail catcher: headers, encoded words, and the text/plain and text/html
// parts of the messages nodemailer writes (single part or multipart, 7bit, quoted-printable, base64).
// mailparser is not among the project's packages; this covers what the catcher needs to show.

export type ParsedMail = {
	/** Header names in lower case; repeated headers joined with ", "; encoded words decoded. */
	headers: Record<string, string>;
	subject: string;
	from: string;
	to: string[];
	messageId?: string;
	text?: string;
	html?: string;
};

type Part = { headers: Record<string, string>; body: string };

/** Splits header block from body and unfolds continuation lines. Input uses "\n" line ends. */
function splitPart(source: string): Part {
	const end = source.indexOf('\n\n');
	const head = end < 0 ? source : source.slice(0, end);
	const body = end < 0 ? '' : source.slice(end + 2);
	const headers: Record<string, string> = {};
	for (const line of head.replace(/\n[ \t]+/g, ' ').split('\n')) {
		const colon = line.indexOf(':');
		if (colon <= 0) continue;
		const name = line.slice(0, colon).trim().toLowerCase();
		const value = line.slice(colon + 1).trim();
		headers[name] = name in headers ? `${headers[name]}, ${value}` : value;
	}
	return { headers, body };
}

/** `text/plain; charset="utf-8"` → { type: 'text/plain', params: { charset: 'utf-8' } }. */
export function parseContentType(value: string | undefined): { type: string; params: Record<string, string> } {
	const [type, ...rest] = (value ?? 'text/plain').split(';');
	const params: Record<string, string> = {};
	for (const p of rest) {
		const eq = p.indexOf('=');
		if (eq < 0) continue;
		params[p.slice(0, eq).trim().toLowerCase()] = p.slice(eq + 1).trim().replace(/^"(.*)"$/, '$1');
	}
	return { type: type.trim().toLowerCase() || 'text/plain', params };
}

function decodeBytes(bytes: Uint8Array, charset = 'utf-8'): string {
	try {
		return new TextDecoder(charset).decode(bytes);
	} catch {
		return new TextDecoder('utf-8').decode(bytes);
	}
}

/** =XX escapes to bytes, then text in the given charset (shared by bodies and Q-encoded words). */
function decodeHexEscapes(s: string, charset?: string): string {
	const bytes: number[] = [];
	const encoder = new TextEncoder();
	for (let i = 0; i < s.length; i++) {
		const hex = s[i] === '=' ? s.slice(i + 1, i + 3) : '';
		if (/^[0-9A-Fa-f]{2}$/.test(hex)) {
			bytes.push(parseInt(hex, 16));
			i += 2;
		} else {
			bytes.push(...encoder.encode(s[i]));
		}
	}
	return decodeBytes(Uint8Array.from(bytes), charset);
}

/** Quoted-printable body (RFC 2045 §6.7): transport padding at line ends and soft line breaks go. */
export function decodeQuotedPrintable(input: string, charset?: string): string {
	return decodeHexEscapes(input.replace(/[ \t]+$/gm, '').replace(/=\n/g, ''), charset);
}

/** RFC 2047 encoded words (`=?utf-8?Q?…?=`, `=?utf-8?B?…?=`); blanks between two of them vanish. */
export function decodeEncodedWords(value: string): string {
	const word = /=\?([^?]+)\?([QqBb])\?([^?]*)\?=/g;
	return value.replace(/(=\?[^?]+\?[QqBb]\?[^?]*\?=)\s+(?==\?)/g, '$1').replace(word, (_m, charset: string, enc: string, data: string) => {
		const cs = charset.split('*')[0];
		if (enc.toUpperCase() === 'B') return decodeBytes(Buffer.from(data, 'base64'), cs);
		return decodeHexEscapes(data.replace(/_/g, ' '), cs);
	});
}

function decodeBody(part: Part): string {
	const { params } = parseContentType(part.headers['content-type']);
	const encoding = (part.headers['content-transfer-encoding'] ?? '7bit').toLowerCase();
	if (encoding === 'base64') return decodeBytes(Buffer.from(part.body.replace(/\s+/g, ''), 'base64'), params.charset);
	if (encoding === 'quoted-printable') return decodeQuotedPrintable(part.body, params.charset);
	return part.body;
}

/** Leaf parts in document order, descending into multipart containers. */
function leaves(part: Part, depth = 0): Part[] {
	const { type, params } = parseContentType(part.headers['content-type']);
	if (!type.startsWith('multipart/') || !params.boundary || depth > 8) return [part];
	const delimiter = `--${params.boundary}`;
	const chunks = `\n${part.body}`.split(`\n${delimiter}`);
	// chunks[0] is the preamble; a chunk starting with "--" is the closing delimiter and epilogue.
	return chunks
		.slice(1)
		.filter((c) => !c.startsWith('--'))
		.map((c) => splitPart(c.replace(/^[ \t]*\n/, '')))
		.flatMap((p) => leaves(p, depth + 1));
}

/** Addresses from a header such as `"Ann Example" <ann@lab.example>, bo@lab.example`. */
export function parseAddressList(value: string | undefined): string[] {
	if (!value) return [];
	return (value.match(/(?:"[^"]*"|[^,])+/g) ?? [])
		.map((a) => a.trim())
		.filter(Boolean)
		.map((a) => a.match(/<([^>]*)>/)?.[1]?.trim() ?? a);
}

export function parseMail(raw: string | Uint8Array): ParsedMail {
	const source = (typeof raw === 'string' ? raw : decodeBytes(raw)).replace(/\r\n/g, '\n');
	const top = splitPart(source);
	const headers = Object.fromEntries(Object.entries(top.headers).map(([k, v]) => [k, decodeEncodedWords(v)]));
	const mail: ParsedMail = {
		headers,
		subject: headers.subject ?? '',
		from: headers.from ?? '',
		to: parseAddressList(headers.to),
		...(headers['message-id'] ? { messageId: headers['message-id'] } : {})
	};
	for (const part of leaves(top)) {
		if (/^attachment/i.test(part.headers['content-disposition'] ?? '')) continue;
		const { type } = parseContentType(part.headers['content-type']);
		if (type === 'text/plain' && mail.text === undefined) mail.text = decodeBody(part);
		else if (type === 'text/html' && mail.html === undefined) mail.html = decodeBody(part);
	}
	return mail;
}
