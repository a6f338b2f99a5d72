// PGlite's Node filesystem with fsync made real. PGlite runs PostgreSQL inside WebAssembly, where
// the mounted host folder's files have no fsync operation at all: PostgreSQL's fsync calls return
// at once and nothing reaches the disk until the kernel writes it back. No package provides this,
// so it is written here: the hook below gives that mount an fsync that calls the host's fsync.
import { fsyncSync } from 'node:fs';
import type { PGlite } from '@electric-sql/pglite';
import { NodeFS } from '@electric-sql/pglite/nodefs';

type EmscriptenModule = { NODEFS: { stream_ops: Record<string, unknown> } };
type InitResult = { emscriptenOpts: { preRun?: ((mod: EmscriptenModule) => void)[] } };

export class DurableNodeFS extends NodeFS {
	async init(pg: PGlite, opts: Parameters<NodeFS['init']>[1]) {
		const result = (await super.init(pg, opts)) as unknown as InitResult;
		result.emscriptenOpts.preRun = [
			...(result.emscriptenOpts.preRun ?? []),
			(mod) => {
				mod.NODEFS.stream_ops.fsync = (stream: { nfd: number }) => {
					fsyncSync(stream.nfd);
					return 0;
				};
			}
		];
		return result as unknown as Awaited<ReturnType<NodeFS['init']>>;
	}
}

/**
 * PGlite's start parameters without `-F` (fsync off), and with WAL flushed by fsync: the
 * default `fdatasync` is a no-op in PGlite's WebAssembly runtime. WAL stays bounded by checkpoints
 * (the single-user backend has no checkpointer of its own; maintenance runs CHECKPOINT too).
 */
export function durableStartParams(defaults: readonly string[]): string[] {
	return [
		...defaults.filter((p) => p !== '-F'),
		'-c',
		'wal_sync_method=fsync',
		'-c',
		'max_wal_size=128MB',
		'-c',
		'min_wal_size=32MB',
		// WebAssembly memory only grows: a smaller buffer cache (the host's page cache holds the rest)
		// and a smaller VACUUM work area bound what a busy server keeps resident.
		'-c',
		'shared_buffers=32MB',
		'-c',
		'maintenance_work_mem=16MB'
	];
}
