// See https://svelte.dev/docs/kit/types#app.d.ts
import type { Role } from '$lib/server/auth/roles';

declare global {
	namespace App {
		interface Error {
			message: string;
			code?: string;
			requestId?: string;
		}
		interface Locals {
			/** Correlates log lines and error pages for one request. */
			requestId: string;
			/** The signed-in person, or null for an anonymous request. */
			user: { id: string; name: string | null; email: string; role: Role } | null;
			/** Set when the database was unreachable during this request (answered 503). */
			databaseUnavailable?: boolean;
		}
		// interface PageData {}
		interface PageState {
			/** Notes of an import, handed from the upload page to the run page. */
			importWarnings?: string[];
		}
		// interface Platform {}
	}
}

export {};
