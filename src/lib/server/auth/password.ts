import bcrypt from 'bcryptjs';

/**
 * Password hashing with bcrypt (bcryptjs). Cost 12 takes roughly a quarter of
 * a second here: slow enough to hinder offline guessing, fast enough for a
 * sign-in (common practice, no source).
 */
const COST = 12;
export const MIN_PASSWORD_LENGTH = 10;
/** bcrypt reads only the first 72 bytes; refuse longer input rather than silently truncating. */
export const MAX_PASSWORD_BYTES = 72;

export function hashPassword(password: string): Promise<string> {
	return bcrypt.hash(password, COST);
}

export async function verifyPassword(password: string, hash: string | null | undefined): Promise<boolean> {
	if (!hash) return false;
	return bcrypt.compare(password, hash);
}

/** Why a new password is not acceptable, or null when it is. */
export function passwordProblem(password: string, email?: string): string | null {
	if (password.length < MIN_PASSWORD_LENGTH) return `Use at least ${MIN_PASSWORD_LENGTH} characters.`;
	if (Buffer.byteLength(password, 'utf8') > MAX_PASSWORD_BYTES) return `Use at most ${MAX_PASSWORD_BYTES} bytes.`;
	if (email && password.toLowerCase() === email.toLowerCase()) return 'Do not use your e-mail address as the password.';
	return null;
}
