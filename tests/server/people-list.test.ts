import { beforeAll, describe, expect, it } from 'vitest'
import { demo, signedIn, unique, type Client } from './support/client'

// Three people of this run only, found by a tag in their names, so rows of other tests never interfere.
describe('people list: sort, filter and page on the server', () => {
  let admin: Client
  const tag = unique('Sortq')
  const names = [`${tag} Bravo`, `${tag} Alpha`, `${tag} Charlie`]
  beforeAll(async () => {
    admin = await signedIn(demo.admin)
    for (const [index, name] of names.entries()) {
      const roles = index === 2 ? ['checker'] : ['engineer']
      const answer = await admin.post('/api/people/invite', { name, email: `${tag.toLowerCase()}.${index}@example.com`, roles })
      expect(answer.status).toBe(201)
    }
  })

  const list = async (query: string) => (await admin.get(`/api/people?q=${encodeURIComponent(tag)}&${query}`)).body

  it('filters by name and sorts by name both ways', async () => {
    const ascending = await list('sort=name&dir=asc')
    expect(ascending.total).toBe(3)
    expect(ascending.items.map((row: { name: string }) => row.name)).toEqual([`${tag} Alpha`, `${tag} Bravo`, `${tag} Charlie`])
    const descending = await list('sort=name&dir=desc')
    expect(descending.items.map((row: { name: string }) => row.name)).toEqual([`${tag} Charlie`, `${tag} Bravo`, `${tag} Alpha`])
  })

  it('sorts by creation time', async () => {
    const byCreation = await list('sort=createdAt&dir=asc')
    expect(byCreation.items.map((row: { name: string }) => row.name)).toEqual(names)
  })

  it('pages', async () => {
    const second = await list('sort=name&pageSize=2&page=2')
    expect(second).toMatchObject({ total: 3, page: 2, pageSize: 2 })
    expect(second.items.map((row: { name: string }) => row.name)).toEqual([`${tag} Charlie`])
  })

  it('filters by role and by status', async () => {
    const checkers = await list('role=checker')
    expect(checkers.items.map((row: { name: string }) => row.name)).toEqual([`${tag} Charlie`])
    expect((await list('status=invited')).total).toBe(3)
    expect((await list('status=active')).total).toBe(0)
  })

  it('finds the demo people by e-mail', async () => {
    const answer = (await admin.get('/api/people?q=dana.whitlock')).body
    expect(answer.items).toHaveLength(1)
    expect(answer.items[0]).toMatchObject({ name: 'Dana Whitlock', roles: ['client'], status: 'active', organisationName: 'Northmere Water District' })
  })

  it('refuses an unknown sort column or page size with 400', async () => {
    expect((await admin.get('/api/people?sort=password_hash')).status).toBe(400)
    expect((await admin.get('/api/people?pageSize=1000')).status).toBe(400)
  })
})
