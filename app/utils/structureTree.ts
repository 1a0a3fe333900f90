// The loop's structure (calc-contract.md, `structure`) as the structure editor changes it: every edit is a new
// tree made from the old one, a node found by its path of steps from the root.
import type { StructureNode } from '#shared/schemas/loop'

/** One step down the tree: into a series or parallel child, or a feedback node's forward or return path. */
export type StructureStep = number | 'forward' | 'return'
export type StructurePath = StructureStep[]

export type SeriesNode = { series: StructureNode[] }
export type ParallelNode = { parallel: StructureNode[]; signs?: Array<1 | -1> }
export type FeedbackNode = { feedback: { forward: StructureNode; return?: StructureNode | null; sign?: 1 | -1 } }

export const isSeries = (node: StructureNode): node is SeriesNode => typeof node === 'object' && node !== null && 'series' in node
export const isParallel = (node: StructureNode): node is ParallelNode => typeof node === 'object' && node !== null && 'parallel' in node
export const isFeedback = (node: StructureNode): node is FeedbackNode => typeof node === 'object' && node !== null && 'feedback' in node

export function nodeAt(root: StructureNode, path: StructurePath): StructureNode | null {
  let node: StructureNode | null | undefined = root
  for (const step of path) {
    if (node === null || node === undefined) return null
    if (typeof step === 'number') node = isSeries(node) ? node.series[step] : isParallel(node) ? node.parallel[step] : undefined
    else node = isFeedback(node) ? (step === 'forward' ? node.feedback.forward : node.feedback.return ?? null) : undefined
  }
  return node ?? null
}

/** The tree with the node at `path` replaced (null as a return path: unity feedback). */
export function replaceAt(root: StructureNode, path: StructurePath, next: StructureNode | null): StructureNode {
  if (path.length === 0) return next ?? root
  const [step, ...rest] = path
  if (typeof step === 'number') {
    if (isSeries(root)) return { series: root.series.map((child, i) => (i === step ? replaceAt(child, rest, next) : child)) }
    if (isParallel(root)) return { ...root, parallel: root.parallel.map((child, i) => (i === step ? replaceAt(child, rest, next) : child)) }
    return root
  }
  if (!isFeedback(root)) return root
  const { forward, sign } = root.feedback
  const back = root.feedback.return ?? null
  if (step === 'forward') return { feedback: { forward: replaceAt(forward, rest, next), return: back, sign: sign ?? -1 } }
  const replaced = rest.length === 0 ? next : back === null ? back : replaceAt(back, rest, next)
  return { feedback: { forward, return: replaced, sign: sign ?? -1 } }
}

const parentOf = (path: StructurePath) => ({ parent: path.slice(0, -1), last: path.at(-1) })

/** A block placed after the node: in its series when it sits in one, else a new series of the two. */
export function addInSeries(root: StructureNode, path: StructurePath, blockId: string): StructureNode {
  const { parent, last } = parentOf(path)
  const holder = path.length ? nodeAt(root, parent) : null
  if (holder && typeof last === 'number' && isSeries(holder))
    return replaceAt(root, parent, { series: [...holder.series.slice(0, last + 1), blockId, ...holder.series.slice(last + 1)] })
  const node = nodeAt(root, path)!
  if (isSeries(node)) return replaceAt(root, path, { series: [...node.series, blockId] })
  return replaceAt(root, path, { series: [node, blockId] })
}

/** A parallel path beside the node, added with a + sign. */
export function addInParallel(root: StructureNode, path: StructurePath, blockId: string): StructureNode {
  const node = nodeAt(root, path)!
  if (isParallel(node)) return replaceAt(root, path, { parallel: [...node.parallel, blockId], signs: [...(node.signs ?? node.parallel.map(() => 1 as const)), 1] })
  return replaceAt(root, path, { parallel: [node, blockId], signs: [1, 1] })
}

/** A loop closed around the node: negative unity feedback, the inner loop of a cascade when nested. */
export function closeLoopAround(root: StructureNode, path: StructurePath): StructureNode {
  const node = nodeAt(root, path)!
  return replaceAt(root, path, { feedback: { forward: node, return: null, sign: -1 } })
}

/** The node taken out of its series or parallel; a series or parallel left with one child becomes that child. */
export function removeAt(root: StructureNode, path: StructurePath): StructureNode {
  const { parent, last } = parentOf(path)
  const holder = nodeAt(root, parent)
  if (holder === null || typeof last !== 'number') return root
  if (isSeries(holder)) {
    const series = holder.series.filter((_, i) => i !== last)
    return replaceAt(root, parent, series.length === 1 ? series[0]! : { series })
  }
  if (isParallel(holder)) {
    const parallel = holder.parallel.filter((_, i) => i !== last)
    const signs = (holder.signs ?? holder.parallel.map(() => 1 as const)).filter((_, i) => i !== last)
    return replaceAt(root, parent, parallel.length === 1 ? (signs[0] === -1 ? holder : parallel[0]!) : { parallel, signs })
  }
  return root
}

/** A feedback node replaced by its forward path (the loop opened). */
export function openLoop(root: StructureNode, path: StructurePath): StructureNode {
  const node = nodeAt(root, path)
  return node && isFeedback(node) ? replaceAt(root, path, node.feedback.forward) : root
}

export function moveInSeries(root: StructureNode, path: StructurePath, by: -1 | 1): StructureNode {
  const { parent, last } = parentOf(path)
  const holder = nodeAt(root, parent)
  if (!holder || typeof last !== 'number' || !isSeries(holder)) return root
  const to = last + by
  if (to < 0 || to >= holder.series.length) return root
  const series = [...holder.series]
  ;[series[last], series[to]] = [series[to]!, series[last]!]
  return replaceAt(root, parent, { series })
}

export function setParallelSign(root: StructureNode, path: StructurePath, index: number, sign: 1 | -1): StructureNode {
  const node = nodeAt(root, path)
  if (!node || !isParallel(node)) return root
  const signs = [...(node.signs ?? node.parallel.map(() => 1 as const))]
  signs[index] = sign
  return replaceAt(root, path, { parallel: node.parallel, signs })
}

export function setFeedbackSign(root: StructureNode, path: StructurePath, sign: 1 | -1): StructureNode {
  const node = nodeAt(root, path)
  if (!node || !isFeedback(node)) return root
  return replaceAt(root, path, { feedback: { ...node.feedback, sign } })
}

/** Every block id the structure names, in order. */
export function blocksOf(node: StructureNode | null | undefined): string[] {
  if (node === null || node === undefined) return []
  if (typeof node === 'string') return [node]
  if (isSeries(node)) return node.series.flatMap(blocksOf)
  if (isParallel(node)) return node.parallel.flatMap(blocksOf)
  if (isFeedback(node)) return [...blocksOf(node.feedback.forward), ...blocksOf(node.feedback.return)]
  return []
}

/** The structure in words and symbols, for a conflict's two sides and a screen reader: `loop(C · P, return H, −)`. */
export function structureText(node: StructureNode | null | undefined): string {
  if (node === null || node === undefined) return 'unity'
  if (typeof node === 'string') return node
  if (isSeries(node)) return node.series.map(structureText).join(' · ')
  if (isParallel(node)) return `(${node.parallel.map((child, i) => `${(node.signs?.[i] ?? 1) === -1 ? '−' : '+'}${structureText(child)}`).join(' ')})`
  if (isFeedback(node))
    return `loop(${structureText(node.feedback.forward)}; return ${structureText(node.feedback.return)}; ${(node.feedback.sign ?? -1) === -1 ? 'negative' : 'positive'})`
  return '?'
}

/** The block ids renamed inside the tree (a block's id edited in the block list). */
export function renameBlock(node: StructureNode, from: string, to: string): StructureNode {
  if (typeof node === 'string') return node === from ? to : node
  if (isSeries(node)) return { series: node.series.map((child) => renameBlock(child, from, to)) }
  if (isParallel(node)) return { ...node, parallel: node.parallel.map((child) => renameBlock(child, from, to)) }
  if (isFeedback(node)) {
    const back = node.feedback.return
    return { feedback: { ...node.feedback, forward: renameBlock(node.feedback.forward, from, to), return: back ? renameBlock(back, from, to) : back ?? null } }
  }
  return node
}
