/**
 * scrypt parameters for password hashes, used by nuxt-auth-utils in the server and by the seed script.
 * N = 2^14, r = 8, p = 5 is one of the equivalent settings of the OWASP Password Storage Cheat Sheet
 * (scrypt N=2^17/r=8/p=1 or N=2^14/r=8/p=5).
 */
export const SCRYPT_OPTIONS = {
  cost: 16384,
  blockSize: 8,
  parallelization: 5,
  saltSize: 16,
  keyLength: 64,
  maxMemory: 64 * 1024 * 1024,
}
