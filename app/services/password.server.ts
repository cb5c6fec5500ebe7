/**
 * Password hashing with argon2id (RFC 9106) through @node-rs/argon2.
 *
 * Parameters: m = 19456 KiB (19 MiB), t = 2 passes, p = 1 lane, 16-byte random salt,
 * 32-byte output; the minimum configuration recommended by the OWASP Password Storage
 * Cheat Sheet (2023 revision) for argon2id. The parameters are kept in the PHC string, so
 * they can be raised later and old hashes still verify (`needsRehash`).
 */
import { hash, verify, type Algorithm, type Options } from "@node-rs/argon2";

/** `Algorithm.Argon2id`: a `const enum` in the package's declarations, unusable under isolatedModules. */
const ARGON2ID = 2 as Algorithm;

export const ARGON2_OPTIONS: Options = {
  algorithm: ARGON2ID,
  memoryCost: 19456,
  timeCost: 2,
  parallelism: 1,
  outputLen: 32,
};

/** Shortest and longest password accepted (NIST SP 800-63B §5.1.1.2: at least 8; a cap bounds hashing work). */
export const PASSWORD_MIN_LENGTH = 8;
export const PASSWORD_MAX_LENGTH = 256;

export function hashPassword(password: string): Promise<string> {
  return hash(password, ARGON2_OPTIONS);
}

/** True when `password` matches `passwordHash`; false (never a throw) for a malformed hash. */
export async function verifyPassword(passwordHash: string, password: string): Promise<boolean> {
  try {
    return await verify(passwordHash, password);
  } catch {
    return false;
  }
}

/** A hash of a random string, verified against when the e-mail is unknown so that both paths cost the same. */
let decoyHash: Promise<string> | undefined;
export function decoyPasswordHash(): Promise<string> {
  decoyHash ??= hashPassword(`decoy-${Math.random()}-${Date.now()}`);
  return decoyHash;
}

/** True when the stored hash uses weaker parameters than ARGON2_OPTIONS. */
export function needsRehash(passwordHash: string): boolean {
  const m = /^\$argon2id\$v=19\$m=(\d+),t=(\d+),p=(\d+)\$/.exec(passwordHash);
  if (!m) return true;
  return (
    Number(m[1]) < (ARGON2_OPTIONS.memoryCost ?? 0) ||
    Number(m[2]) < (ARGON2_OPTIONS.timeCost ?? 0) ||
    Number(m[3]) < (ARGON2_OPTIONS.parallelism ?? 0)
  );
}

/** Field error for a new password, or null when acceptable. */
export function passwordProblem(password: string): string | null {
  if (password.length < PASSWORD_MIN_LENGTH) return `Use at least ${PASSWORD_MIN_LENGTH} characters.`;
  if (password.length > PASSWORD_MAX_LENGTH) return `Use at most ${PASSWORD_MAX_LENGTH} characters.`;
  return null;
}
