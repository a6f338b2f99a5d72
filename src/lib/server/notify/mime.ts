// The mail catcher's reader: the parts of a caught message a person or a test looks at, taken from
// mailparser (encoded words, quoted-printable, base64, multipart and charsets are its business).
import { simpleParser, type AddressObject, type HeaderValue } from 'mailparser';

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

/** `Name <address>` as people write it (mailparser's own text quotes every display name). */
const addressText = (field: AddressObject): string =>
	field.value.map((v) => (v.name ? `${v.name} <${v.address ?? ''}>` : (v.address ?? ''))).join(', ');

const isAddressObject = (value: object): value is AddressObject => 'text' in value && 'value' in value;

/** A header as one line of text, whatever structure mailparser gave it. */
function headerText(value: HeaderValue): string {
	if (typeof value === 'string') return value;
	if (value instanceof Date) return value.toUTCString();
	if (Array.isArray(value)) return value.map((v) => headerText(v as HeaderValue)).join(', ');
	if (isAddressObject(value)) return addressText(value);
	if ('value' in value && typeof value.value === 'string') {
		const params = Object.entries((value as { params?: Record<string, string> }).params ?? {});
		return [value.value, ...params.map(([k, v]) => `${k}=${v}`)].join('; ');
	}
	return String(value);
}

const addresses = (field: AddressObject | AddressObject[] | undefined): string[] =>
	(Array.isArray(field) ? field : field ? [field] : []).flatMap((a) => a.value.map((v) => v.address ?? '').filter(Boolean));

export async function parseMail(raw: string | Uint8Array): Promise<ParsedMail> {
	const mail = await simpleParser(typeof raw === 'string' ? raw : Buffer.from(raw), {
		// Show the message as sent: no text made up from the HTML or HTML from the text.
		skipHtmlToText: true,
		skipTextToHtml: true,
		skipTextLinks: true,
		skipImageLinks: true
	});
	const headers: Record<string, string> = {};
	for (const [name, value] of mail.headers) headers[name.toLowerCase()] = headerText(value);
	return {
		headers,
		subject: mail.subject ?? '',
		from: mail.from ? addressText(mail.from) : '',
		to: addresses(mail.to),
		...(mail.messageId ? { messageId: mail.messageId } : {}),
		...(typeof mail.text === 'string' ? { text: mail.text } : {}),
		...(typeof mail.html === 'string' ? { html: mail.html } : {})
	};
}
