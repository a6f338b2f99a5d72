// An import upload written to a file in the data folder as it arrives (busboy parses the multipart
// stream), so a file of hundreds of MB never sits in the server's memory: request.formData()
// would hold all of it. The import reads the spooled file twice (check, then store) through a
// disk-backed Blob, and the file is removed when the import is done.
import { randomUUID } from 'node:crypto';
import { createWriteStream, mkdirSync, openAsBlob, rmSync } from 'node:fs';
import path from 'node:path';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { Transform } from 'node:stream';
import busboy from 'busboy';
import { tooLargeMessage } from '../http/body-size.js';

export class UploadRefused extends Error {}

/** The body ran past the upload limit (HTTP 413); nothing of it is kept. */
export class UploadTooLarge extends UploadRefused {}

export interface SpooledUpload {
	file: Blob;
	fileName: string;
	fields: Record<string, string>;
	/** Removes the spooled file (call when the import is done, whatever its outcome). */
	discard(): void;
}

/** Text fields other than the file are short (a run key); this caps what a form can make us hold. */
const FIELD_LIMIT_BYTES = 4096;

/** Counts the body's bytes on their way to the parser and stops the upload once they pass the limit. */
function byteLimit(limit_bytes: number) {
	let seen_bytes = 0;
	return new Transform({
		transform(chunk: Buffer, _encoding, done) {
			seen_bytes += chunk.length;
			if (seen_bytes > limit_bytes) done(new UploadTooLarge(tooLargeMessage('the upload ran past it', limit_bytes)));
			else done(null, chunk);
		}
	});
}

/** A body's length is checked before this runs when it is declared; one sent chunked is counted here, against `limit_bytes`. */
export async function spoolUpload(request: Request, dataDir: string, limit_bytes: number, fileField = 'file'): Promise<SpooledUpload> {
	const contentType = request.headers.get('content-type') ?? '';
	if (!contentType.toLowerCase().startsWith('multipart/form-data') || !request.body) {
		throw new UploadRefused(`send the file as multipart/form-data with a field "${fileField}"`);
	}
	const dir = path.join(dataDir, 'uploads');
	mkdirSync(dir, { recursive: true });
	const spoolPath = path.join(dir, `${randomUUID()}.part`);
	const discard = () => rmSync(spoolPath, { force: true });
	const fields: Record<string, string> = {};
	let fileName: string | null = null;
	let written: Promise<void> | null = null;

	let parser: busboy.Busboy;
	try {
		parser = busboy({ headers: { 'content-type': contentType }, limits: { files: 1, fields: 20, fieldSize: FIELD_LIMIT_BYTES } });
	} catch (err) {
		throw new UploadRefused(`the multipart body cannot be read: ${(err as Error).message}`);
	}
	parser.on('file', (name, stream, info) => {
		if (name !== fileField || written) {
			stream.resume();
			return;
		}
		fileName = info.filename || 'upload';
		written = pipeline(stream, createWriteStream(spoolPath));
		// A failed write is reported by the await below; this keeps it from being unhandled meanwhile.
		written.catch(() => {});
	});
	parser.on('field', (name, value, info) => {
		if (!info.valueTruncated) fields[name] = value;
	});
	try {
		await pipeline(Readable.fromWeb(request.body as import('node:stream/web').ReadableStream<Uint8Array>), byteLimit(limit_bytes), parser);
		if (!written) throw new UploadRefused(`field "${fileField}" is missing: choose an NDJSON file of frames`);
		await written;
	} catch (err) {
		discard();
		if (err instanceof UploadRefused) throw err;
		// adapter-node stops reading at its own limit (the same number) with a 413 of its own.
		if ((err as { status?: number }).status === 413) throw new UploadTooLarge(tooLargeMessage('the upload ran past it', limit_bytes));
		throw new UploadRefused(`the upload could not be read: ${(err as Error).message}`);
	}
	return { file: await openAsBlob(spoolPath), fileName: fileName ?? 'upload', fields, discard };
}
