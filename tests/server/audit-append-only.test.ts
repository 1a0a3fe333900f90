import { describe, expect, it } from 'vitest'
import { Client, database } from './support/client'

describe('the audit trail is append-only in the database', () => {
  it('accepts new rows', async () => {
    await new Client().get('/api/audit') // a refusal, so the trail has at least one row
    const [row] = await database()`insert into audit_events (action) values ('test.appended') returning id`
    expect(Number(row!.id)).toBeGreaterThan(0)
  })

  it('refuses UPDATE', async () => {
    await expect(database()`update audit_events set action = 'rewritten'`).rejects.toThrow(/append-only: UPDATE refused/)
    const [changed] = await database()`select count(*)::int as n from audit_events where action = 'rewritten'`
    expect(changed!.n).toBe(0)
  })

  it('refuses DELETE and TRUNCATE', async () => {
    const [before] = await database()`select count(*)::int as n from audit_events`
    await expect(database()`delete from audit_events`).rejects.toThrow(/append-only: DELETE refused/)
    await expect(database()`truncate audit_events`).rejects.toThrow(/append-only: TRUNCATE refused/)
    const [after] = await database()`select count(*)::int as n from audit_events`
    expect(after!.n).toBeGreaterThanOrEqual(before!.n)
  })
})
