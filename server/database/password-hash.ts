import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import { SCRYPT_OPTIONS } from './scrypt-options'

// The same hasher nuxt-auth-utils builds from the same options, for scripts that run outside Nitro.
const hash = new Hash(new Scrypt(SCRYPT_OPTIONS))

export const hashPasswordOutsideNitro = (password: string) => hash.make(password)
export const verifyPasswordOutsideNitro = (hashed: string, plain: string) => hash.verify(hashed, plain)
