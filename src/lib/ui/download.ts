// Downloads an export with a progress indication: the body is read chunk by chunk and its lines
// counted against the frame count the server sends in X-Phasewarden-Frames, then handed to the
// browser as a file. (An <a download> link streams to disk too, but shows no progress in the page.)

export interface DownloadProgress {
	/** Lines received so far (frames; a CSV's header counts as one). */
	lines: number;
	/** Frames the server said the file holds; null when it did not say. */
	expected: number | null;
	bytes: number;
}

const NEWLINE = 10;

export function fileNameOf(res: Response, fallback: string): string {
	const match = /filename="([^"]+)"/.exec(res.headers.get('content-disposition') ?? '');
	return match?.[1] ?? fallback;
}

/** Fetches `url` and saves it as a file, reporting progress; throws with the server's message on failure. */
export async function downloadWithProgress(
	url: string,
	fallbackName: string,
	onProgress: (p: DownloadProgress) => void,
	signal?: AbortSignal
) {
	const res = await fetch(url, { signal });
	if (!res.ok || !res.body) {
		const body = await res.json().catch(() => null);
		throw new Error(body?.message ?? `the server answered ${res.status}`);
	}
	const header = res.headers.get('x-phasewarden-frames');
	const expected = header === null ? null : Number(header);
	const reader = res.body.getReader();
	const parts: Uint8Array[] = [];
	const progress: DownloadProgress = { lines: 0, expected, bytes: 0 };
	for (;;) {
		const { value, done } = await reader.read();
		if (done) break;
		parts.push(value);
		progress.bytes += value.length;
		for (let i = value.indexOf(NEWLINE); i >= 0; i = value.indexOf(NEWLINE, i + 1)) progress.lines++;
		onProgress({ ...progress });
	}
	const blob = new Blob(parts as BlobPart[], { type: res.headers.get('content-type') ?? 'application/octet-stream' });
	const href = URL.createObjectURL(blob);
	const a = document.createElement('a');
	a.href = href;
	a.download = fileNameOf(res, fallbackName);
	document.body.append(a);
	a.click();
	a.remove();
	setTimeout(() => URL.revokeObjectURL(href), 10_000);
	return progress;
}
