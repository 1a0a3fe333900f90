// The invented people of the demo (product.md, "Demo scenario"). scripts/seed.ts creates them;
// scripts/serve prints them; README.md lists them.
export const demoPassword = 'hollins-demo-2140'

export const demoPeople = [
  { name: 'Imogen Varga', email: 'imogen.varga@example.com', roles: ['admin'], projectRole: null },
  { name: 'Tomás Okafor', email: 'tomas.okafor@example.com', roles: ['engineer'], projectRole: 'engineer' },
  { name: 'Priya Raman', email: 'priya.raman@example.com', roles: ['engineer', 'checker'], projectRole: 'engineer' },
  { name: 'Henrik Salo', email: 'henrik.salo@example.com', roles: ['checker'], projectRole: 'checker' },
  { name: 'Dana Whitlock', email: 'dana.whitlock@example.com', roles: ['client'], projectRole: 'client' },
] as const

if (process.argv[1]?.endsWith('demo-people.ts')) {
  for (const person of demoPeople) console.log(`  ${person.roles.join(' + ').padEnd(18)} ${person.email}`)
  console.log(`  password for all: ${demoPassword}`)
}
