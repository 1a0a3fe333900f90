// Processes of a process tree, and their memory, read from /proc: the benches and the crash test of a package issue.
import { readFileSync, readdirSync } from 'node:fs'


/** The process and all its descendants, from the parent pid in /proc/PID/stat. */
export function processTree(root: number): number[] {
  const children = new Map<number, number[]>()
  for (const entry of readdirSync('/proc')) {
    if (!/^\d+$/.test(entry)) continue
    try {
      const stat = readFileSync(`/proc/${entry}/stat`, 'utf8')
      // The command name, in parentheses, may hold spaces: the fields after its closing one are split.
      const parent = Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1])
      children.set(parent, [...(children.get(parent) ?? []), Number(entry)])
    } catch {
      // the process ended while being read
    }
  }
  const tree = [root]
  for (let i = 0; i < tree.length; i++) tree.push(...(children.get(tree[i]!) ?? []))
  return tree
}

/** Kilobytes of `field` (VmRSS of status, Pss of smaps_rollup) summed over the processes; ended ones count 0. */
export function sumKb(pids: number[], file: 'status' | 'smaps_rollup', field: string): number {
  let total = 0
  for (const pid of pids) {
    try {
      const match = readFileSync(`/proc/${pid}/${file}`, 'utf8').match(new RegExp(`^${field}:\\s+(\\d+) kB`, 'm'))
      total += match ? Number(match[1]) : 0
    } catch {
      // ended
    }
  }
  return total
}

/** Samples the tree's summed RSS and PSS every `everyMs` until stopped; answers the peaks. */
export function sampleTree(root: number, everyMs = 25) {
  const peak = { rssKb: 0, pssKb: 0, processes: 0, largest: '' }
  const timer = setInterval(() => {
    const tree = processTree(root)
    const rss = sumKb(tree, 'status', 'VmRSS')
    if (rss > peak.rssKb) {
      peak.rssKb = rss
      peak.processes = tree.length
      peak.largest = largestOf(tree)
    }
    peak.pssKb = Math.max(peak.pssKb, sumKb(tree, 'smaps_rollup', 'Pss'))
  }, everyMs)
  return { peak, stop: () => clearInterval(timer) }
}

/** The three largest processes of the tree by RSS, "name MiB", for the reader of a figure. */
function largestOf(pids: number[]): string {
  const sized = pids.map((pid) => {
    let name = String(pid)
    try {
      // Chromium rewrites its command line into one string: the process type is read from it by pattern.
      const type = /--type=([\w-]+)/.exec(readFileSync(`/proc/${pid}/cmdline`, 'utf8'))
      name = `${readFileSync(`/proc/${pid}/comm`, 'utf8').trim()}${type ? ` (${type[1]})` : ''}`
    } catch {
      // ended
    }
    return { name, kb: sumKb([pid], 'status', 'VmRSS') }
  })
  return sized
    .sort((a, b) => b.kb - a.kb)
    .slice(0, 4)
    .map((p) => `${p.name} ${(p.kb / 1024).toFixed(0)}`)
    .join(', ')
}
