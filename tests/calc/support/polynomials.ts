/** Real coefficients of Π (s − r) over complex roots [re, im], highest power first: polynomials with known roots. */
export function fromRoots(roots: Array<[number, number]>): number[] {
  let p: Array<[number, number]> = [[1, 0]]
  for (const [a, b] of roots) {
    const q: Array<[number, number]> = Array.from({ length: p.length + 1 }, () => [0, 0])
    p.forEach(([re, im], i) => {
      q[i][0] += re
      q[i][1] += im
      q[i + 1][0] -= a * re - b * im
      q[i + 1][1] -= a * im + b * re
    })
    p = q
  }
  return p.map(([re]) => re)
}
