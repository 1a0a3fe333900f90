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

/** Seconds of CPU (user and system, /proc/PID/stat fields 14 and 15) a process has used so far; 0 once ended. */
function cpuSecondsOf(pid: number): number {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8')
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ')
    // Fields after the command name start at field 3 (state): utime is field 14, stime 15, in clock ticks (100 a second on Linux).
    return (Number(fields[11]) + Number(fields[12])) / 100
  } catch {
    return 0
  }
}

/**
 * What a process of the app's tree is: the app (`root`), Chromium's browser, the --type (and utility sub-type) of
 * another of Chromium's, or "app child" (a child not yet Chromium's: one just forked shows its parent's command line).
 */
export function kindOf(pid: number, root: number): string {
  if (pid === root) return 'app'
  try {
    // Chromium rewrites its command line as one string (its process title), so --type= is looked for in the whole.
    const line = readFileSync(`/proc/${pid}/cmdline`, 'utf8')
    if (!line.includes('chromium')) return 'app child'
    const type = /--type=([\w-]+)/.exec(line)?.[1]
    const sub = /--utility-sub-type=([\w.]+)/.exec(line)?.[1]
    return type ? (sub ? `${type} ${sub.split('.')[0]}` : type) : 'chromium'
  } catch {
    return 'ended'
  }
}

/**
 * Samples the tree's summed RSS and PSS every `everyMs` until stopped; answers the peaks (with the processes at the
 * RSS peak). `cpuSince()` answers the
 * CPU seconds each kind of process used since the last call (a process seen in a sample keeps its last figure after
 * it ends, so a renderer closed meanwhile still counts up to its last sample).
 */
export function sampleTree(root: number, everyMs = 25) {
  // `byProcess`: each process's kind and RSS in MiB at the peak ("app 355, chromium 243, ..."), in the tree's order.
  const peak = { rssKb: 0, pssKb: 0, processes: 0, largest: '', byProcess: '' }
  const cpu = new Map<number, { kind: string; seconds: number }>()
  const counted = new Map<number, number>()
  const timer = setInterval(() => {
    const tree = processTree(root)
    for (const pid of tree) {
      const seconds = cpuSecondsOf(pid)
      // Read each time: a process just forked by Chromium shows its parent's command line until it has started.
      if (seconds > 0) cpu.set(pid, { kind: kindOf(pid, root), seconds })
    }
    const rss = sumKb(tree, 'status', 'VmRSS')
    if (rss > peak.rssKb) {
      peak.rssKb = rss
      peak.processes = tree.length
      peak.largest = largestOf(tree)
      peak.byProcess = tree.map((pid) => `${kindOf(pid, root)} ${(sumKb([pid], 'status', 'VmRSS') / 1024).toFixed(0)}`).join(', ')
    }
    peak.pssKb = Math.max(peak.pssKb, sumKb(tree, 'smaps_rollup', 'Pss'))
  }, everyMs)
  const cpuSince = () => {
    const byKind = new Map<string, number>()
    for (const [pid, { kind, seconds }] of cpu) {
      byKind.set(kind, (byKind.get(kind) ?? 0) + seconds - (counted.get(pid) ?? 0))
      counted.set(pid, seconds)
    }
    return [...byKind].filter(([, seconds]) => seconds >= 0.005).sort((a, b) => b[1] - a[1])
  }
  return { peak, cpuSince, stop: () => clearInterval(timer) }
}

/**
 * A bench's peak memory, judged against `targetMb` (MB, 10^6 bytes, as the issues write them) on PSS: each shared page
 * divided among the processes sharing it, so the app's and its browser's figures add up to what they hold together.
 * RSS summed is printed beside it as an upper bound: it counts a shared page once per process (Chromium's code
 * mapped in both the browser and its renderer).
 */
export function peakMemoryVerdict(peak: { rssKb: number; pssKb: number }, targetMb: number): string {
  const pssMb = (peak.pssKb * 1024) / 1e6
  return `PSS summed ${(peak.pssKb / 1024).toFixed(0)} MiB = ${pssMb.toFixed(0)} MB  ${pssMb < targetMb ? 'PASS' : 'FAIL'} (under ${targetMb} MB); RSS summed ${(peak.rssKb / 1024).toFixed(0)} MiB`
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
