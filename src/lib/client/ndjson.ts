/**
 * Incremental reader for newline-delimited JSON (the upload route streams
 * progress lines with `Accept: application/x-ndjson`). Fed the growing
 * response text of an XMLHttpRequest or the chunks of a fetch body; a line is
 * parsed only once its newline has arrived.
 */
export class NdjsonReader<T = unknown> {
	#buffer = '';
	#consumed = 0;
	readonly #onLine: (value: T) => void;
	constructor(onLine: (value: T) => void) {
		this.#onLine = onLine;
	}

	/** Add a chunk of text. */
	push(chunk: string): void {
		this.#buffer += chunk;
		let nl: number;
		while ((nl = this.#buffer.indexOf('\n')) >= 0) {
			const line = this.#buffer.slice(0, nl).trim();
			this.#buffer = this.#buffer.slice(nl + 1);
			if (line !== '') this.#onLine(JSON.parse(line) as T);
		}
	}

	/** Feed the whole text received so far (XHR responseText); only the new part is read. */
	pushWhole(text: string): void {
		if (text.length <= this.#consumed) return;
		const chunk = text.slice(this.#consumed);
		this.#consumed = text.length;
		this.push(chunk);
	}

	/** The stream ended: a last line without a newline still counts. */
	end(): void {
		const rest = this.#buffer.trim();
		this.#buffer = '';
		if (rest !== '') this.#onLine(JSON.parse(rest) as T);
	}
}

/** Read an NDJSON fetch body line by line. */
export async function readNdjson<T>(body: ReadableStream<Uint8Array>, onLine: (value: T) => void): Promise<void> {
	const reader = new NdjsonReader<T>(onLine);
	const decoder = new TextDecoder();
	const r = body.getReader();
	for (;;) {
		const { done, value } = await r.read();
		if (done) break;
		reader.push(decoder.decode(value, { stream: true }));
	}
	reader.push(decoder.decode());
	reader.end();
}
