// Which kind of backup a file is, from its first bytes: the embedded database's dump is a gzipped
// tarball; pg_dump's custom format starts with "PGDMP".
import { openSync, readSync, closeSync } from 'node:fs';

export type BackupKind = 'embedded' | 'server';

export function backupKindOf(file: string): BackupKind {
	const head = Buffer.alloc(5);
	const fd = openSync(file, 'r');
	try {
		readSync(fd, head, 0, 5, 0);
	} finally {
		closeSync(fd);
	}
	if (head[0] === 0x1f && head[1] === 0x8b) return 'embedded';
	if (head.toString('latin1') === 'PGDMP') return 'server';
	throw new Error(`${file} is not a Phasewarden backup (neither an embedded-database dump nor a pg_dump custom-format file)`);
}
