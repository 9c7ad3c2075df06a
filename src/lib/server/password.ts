import { hash, verify } from '@node-rs/argon2';

// Argon2id with the OWASP Password Storage Cheat Sheet's minimum (19 MiB, 2 passes, 1 lane).
const OPTIONS = { memoryCost: 19456, timeCost: 2, outputLen: 32, parallelism: 1 };

export const hashPassword = (password: string) => hash(password, OPTIONS);
export const verifyPassword = (stored: string, password: string) => verify(stored, password, OPTIONS);

export const PASSWORD_RULE = 'at least 10 characters';
export function passwordProblem(password: string): string | null {
  if (password.length < 10) return `Use a password of ${PASSWORD_RULE}.`;
  if (password.length > 200) return 'Use a password of at most 200 characters.';
  return null;
}
