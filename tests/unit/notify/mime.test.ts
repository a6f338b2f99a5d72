// The catcher's MIME reader against messages built by nodemailer itself (the registry's reference
// for what our mailer sends) and against the worked examples of RFC 2047 §8 (from memory).
import { describe, expect, it } from 'vitest';
import nodemailer from 'nodemailer';
import { decodeEncodedWords, decodeQuotedPrintable, parseAddressList, parseMail } from '../../../src/lib/server/notify/mime';

/** Builds the exact bytes nodemailer would send, without a network. */
async function build(message: Record<string, unknown>): Promise<string> {
	const transport = nodemailer.createTransport({ streamTransport: true, buffer: true, newline: 'windows' });
	const info = await transport.sendMail(message);
	return (info.message as Buffer).toString('utf8');
}

describe('parseMail on nodemailer output', () => {
	it('reads headers, recipients and the text and html of a multipart/alternative message', async () => {
		const text = 'Lock below 0.50 for 5 windows.\nSecond line.';
		const html = '<p>Lock below <b>0.50</b></p>';
		const raw = await build({
			from: '"Night Monitor" <alerts@kessler-lab.example>',
			to: ['Mira Ostrova <mira@kessler-lab.example>', 'tomas@kessler-lab.example'],
			subject: 'Critical: lock lost',
			text,
			html
		});
		expect(raw).toContain('multipart/alternative');
		const mail = parseMail(raw);
		expect(mail.subject).toBe('Critical: lock lost');
		// nodemailer drops the quotes around a display name without special characters
		expect(mail.from).toBe('Night Monitor <alerts@kessler-lab.example>');
		expect(mail.to).toEqual(['mira@kessler-lab.example', 'tomas@kessler-lab.example']);
		expect(mail.text?.trimEnd()).toBe(text);
		expect(mail.html?.trimEnd()).toBe(html);
		expect(mail.messageId).toMatch(/^<.+@.+>$/);
	});

	it('decodes a non-ASCII subject and quoted-printable bodies with long lines', async () => {
		const text = `Temperatur Mischkammer: 31 mK — über der Grenze. ${'Ωmega '.repeat(30)}`;
		const raw = await build({ from: 'a@b.example', to: 'c@d.example', subject: 'Störung – Kühlung ↑', text, html: `<p>${text}</p>` });
		expect(raw).toMatch(/quoted-printable/i);
		expect(raw).toMatch(/=\?UTF-8\?/i);
		const mail = parseMail(raw);
		expect(mail.subject).toBe('Störung – Kühlung ↑');
		expect(mail.text?.trimEnd()).toBe(text.trimEnd());
		expect(mail.html?.trimEnd()).toBe(`<p>${text}</p>`.trimEnd());
	});

	it('decodes base64 bodies and a text-only message', async () => {
		const text = 'Ψ states: 6\nlock 0.31 at seq 1042';
		const b64 = parseMail(await build({ from: 'a@b.example', to: 'c@d.example', subject: 's', text, textEncoding: 'base64' }));
		expect(b64.text?.trimEnd()).toBe(text);
		expect(b64.html).toBeUndefined();
		const plain = parseMail(await build({ from: 'a@b.example', to: 'c@d.example', subject: 'plain', text: 'just words' }));
		expect(plain.text?.trimEnd()).toBe('just words');
	});

	it('skips attachments', async () => {
		const raw = await build({
			from: 'a@b.example',
			to: 'c@d.example',
			subject: 's',
			text: 'body',
			attachments: [{ filename: 'frames.txt', content: 'not the body', contentType: 'text/plain' }]
		});
		expect(parseMail(raw).text?.trimEnd()).toBe('body');
	});
});

describe('RFC 2047 and RFC 2045 pieces', () => {
	it('decodes the encoded words of RFC 2047 §8 (from memory)', () => {
		expect(decodeEncodedWords('=?US-ASCII?Q?Keith_Moore?= <moore@cs.utk.edu>')).toBe('Keith Moore <moore@cs.utk.edu>');
		expect(decodeEncodedWords('=?ISO-8859-1?Q?Keld_J=F8rn_Simonsen?= <keld@dkuug.dk>')).toBe('Keld Jørn Simonsen <keld@dkuug.dk>');
		expect(decodeEncodedWords('=?ISO-8859-1?Q?Andr=E9?= Pirard')).toBe('André Pirard');
		expect(decodeEncodedWords('(=?ISO-8859-1?Q?a?= =?ISO-8859-1?Q?b?=)')).toBe('(ab)');
		expect(decodeEncodedWords('(=?ISO-8859-1?Q?a?= b)')).toBe('(a b)');
		expect(decodeEncodedWords('=?UTF-8?B?w6nDqA==?=')).toBe('éè'); // Buffer.from('éè').toString('base64')
	});

	it('decodes quoted-printable soft line breaks and multi-byte sequences (RFC 2045 §6.7)', () => {
		expect(decodeQuotedPrintable('abc=\r\ndef'.replace(/\r\n/g, '\n'))).toBe('abcdef');
		expect(decodeQuotedPrintable('=C3=BCber =3D 1')).toBe('über = 1');
		expect(decodeQuotedPrintable('trailing   \nnext')).toBe('trailing\nnext');
	});

	it('takes the addresses out of an address list, commas inside quotes included', () => {
		expect(parseAddressList('"Ostrova, Mira" <mira@x.example>, tomas@x.example')).toEqual(['mira@x.example', 'tomas@x.example']);
		expect(parseAddressList(undefined)).toEqual([]);
	});

	it('survives a message that is not MIME at all', () => {
		const mail = parseMail('no headers here');
		expect(mail.subject).toBe('');
		expect(mail.to).toEqual([]);
	});
});
