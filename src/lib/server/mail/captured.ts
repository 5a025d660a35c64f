import { env } from '$env/dynamic/private';

/**
 * The mail the local fake received (development and tests only). MAIL_FAKE_URL
 * is unset in production, and the admin page that uses this is then 404.
 */
export interface CapturedMail {
	id: number;
	to: string[];
	from: string;
	subject: string;
	text: string;
	html: string;
	date: string;
}

export function mailFakeUrl(): string | null {
	return env.MAIL_FAKE_URL || null;
}

export async function listCaptured(): Promise<CapturedMail[]> {
	const base = mailFakeUrl();
	if (!base) return [];
	const res = await fetch(`${base}/messages`, { signal: AbortSignal.timeout(3000) });
	if (!res.ok) throw new Error(`mail fake answered ${res.status}`);
	return (await res.json()) as CapturedMail[];
}
