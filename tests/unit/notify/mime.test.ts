// The catcher's reader (mailparser underneath) against messages built by nodemailer itself (the
// registry's reference for what our mailer sends) and against the worked examples of RFC 2047 §8
// (from memory), so the fields the catcher shows keep their meaning.
import { describe, expect, it } from 'vitest';
import nodemailer from 'nodemailer';
import { parseMail } from '../../../src/lib/server/notify/mime';

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
		const mail = await parseMail(raw);
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
		const mail = await parseMail(raw);
		expect(mail.subject).toBe('Störung – Kühlung ↑');
		expect(mail.text?.trimEnd()).toBe(text.trimEnd());
		expect(mail.html?.trimEnd()).toBe(`<p>${text}</p>`.trimEnd());
	});

	it('decodes base64 bodies and a text-only message', async () => {
		const text = 'Ψ states: 6\nlock 0.31 at seq 1042';
		const b64 = await parseMail(await build({ from: 'a@b.example', to: 'c@d.example', subject: 's', text, textEncoding: 'base64' }));
		expect(b64.text?.trimEnd()).toBe(text);
		expect(b64.html).toBeUndefined();
		const plain = await parseMail(await build({ from: 'a@b.example', to: 'c@d.example', subject: 'plain', text: 'just words' }));
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
		expect((await parseMail(raw)).text?.trimEnd()).toBe('body');
	});
});

/** A hand-written message, so the header and body bytes are exactly the examples'. */
const message = (headers: string, body = 'x', extra = '') =>
	`From: a@b.example\r\nTo: c@d.example\r\n${headers}\r\nMIME-Version: 1.0\r\n${extra}\r\n${body}\r\n`;
const subjectOf = async (encoded: string) => (await parseMail(message(`Subject: ${encoded}`))).subject;

describe('RFC 2047 and RFC 2045 pieces', () => {
	it('decodes the encoded words of RFC 2047 §8 (from memory)', async () => {
		expect(await subjectOf('=?US-ASCII?Q?Keith_Moore?= <moore@cs.utk.edu>')).toBe('Keith Moore <moore@cs.utk.edu>');
		expect(await subjectOf('=?ISO-8859-1?Q?Keld_J=F8rn_Simonsen?= <keld@dkuug.dk>')).toBe('Keld Jørn Simonsen <keld@dkuug.dk>');
		expect(await subjectOf('=?ISO-8859-1?Q?Andr=E9?= Pirard')).toBe('André Pirard');
		expect(await subjectOf('(=?ISO-8859-1?Q?a?= =?ISO-8859-1?Q?b?=)')).toBe('(ab)');
		expect(await subjectOf('(=?ISO-8859-1?Q?a?= b)')).toBe('(a b)');
		expect(await subjectOf('=?UTF-8?B?w6nDqA==?=')).toBe('éè'); // Buffer.from('éè').toString('base64')
	});

	it('decodes quoted-printable soft line breaks and multi-byte sequences (RFC 2045 §6.7)', async () => {
		const qp = (body: string) =>
			parseMail(message('Subject: s', body, 'Content-Type: text/plain; charset=utf-8\r\nContent-Transfer-Encoding: quoted-printable\r\n'));
		expect((await qp('abc=\r\ndef')).text?.trimEnd()).toBe('abcdef');
		expect((await qp('=C3=BCber =3D 1')).text?.trimEnd()).toBe('über = 1');
		expect((await qp('trailing   \r\nnext')).text?.trimEnd()).toBe('trailing\nnext');
	});

	it('takes the addresses out of an address list, commas inside quotes included', async () => {
		const mail = await parseMail('From: a@b.example\r\nTo: "Ostrova, Mira" <mira@x.example>, tomas@x.example\r\nSubject: s\r\n\r\nx\r\n');
		expect(mail.to).toEqual(['mira@x.example', 'tomas@x.example']);
		expect((await parseMail('Subject: none\r\n\r\nx\r\n')).to).toEqual([]);
	});

	it('survives a message that is not MIME at all', async () => {
		const mail = await parseMail('no headers here');
		expect(mail.subject).toBe('');
		expect(mail.to).toEqual([]);
	});
});
