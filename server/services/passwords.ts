// The one way a person's password changes (invitation acceptance today, a reset later): the new hash is
// stored and every session of the person ends, so a session opened with the old password cannot outlive it.
import { eq } from 'drizzle-orm'
import { people } from '../db/schema'
import type { Database } from '../utils/db'
import { endSessionsOf } from './sessions'

/** `passwordHash` comes from nuxt-auth-utils' hashPassword. Run it inside the caller's transaction. */
export async function setPassword(db: Pick<Database, 'update' | 'insert' | 'select'>, personId: number, passwordHash: string): Promise<number> {
  await db.update(people).set({ passwordHash }).where(eq(people.id, personId))
  return endSessionsOf(db, personId, 'password changed')
}
