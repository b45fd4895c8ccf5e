import { createHash, randomBytes } from 'node:crypto'

/** A one-time link token: 32 random bytes for the link, and its SHA-256, which is all the database keeps. */
export function newOneTimeToken(): { token: string, hash: string } {
  const token = randomBytes(32).toString('base64url')
  return { token, hash: hashOneTimeToken(token) }
}

export function hashOneTimeToken(token: string): string {
  return createHash('sha256').update(token).digest('hex')
}
