// The loop diagram's layout: the structure tree laid out recursively as nested boxes, every signal running left
// to right through the forward paths and right to left through the return paths beneath them, the way block
// diagrams are drawn by hand. Our own code rather than a graph layout library (elkjs and the like): a layered
// graph layout treats a feedback loop as a cycle to break, reversing the return edge and placing the summing
// junction wherever the layering puts it, whereas here the junction sits at the loop's input and the return path
// under its forward path by construction, and nested loops of a cascade nest as boxes. Plain numbers out, no
// DOM measuring, so the print view draws the same SVG; text widths are estimated from the font size.
import type { StructureNode } from '#shared/schemas/loop'
import { isFeedback, isParallel, isSeries } from './structureTree'

export type DiagramShape =
  | { kind: 'block'; x: number; y: number; w: number; h: number; id: string; lines: string[] }
  | { kind: 'junction'; cx: number; cy: number; r: number }
  | { kind: 'branch'; cx: number; cy: number }
  | { kind: 'wire'; points: Array<[number, number]>; arrow: boolean }
  | { kind: 'sign'; x: number; y: number; text: string }
  | { kind: 'label'; x: number; y: number; text: string; anchor: 'start' | 'middle' | 'end' }

export interface DiagramLayout {
  width: number
  height: number
  shapes: DiagramShape[]
}

export const FONT_SIZE = 13
/** Average advance of Noto Sans at 13 px, a little generous so a label never touches its box. */
const CHAR_WIDTH = 7.2
const LINE_HEIGHT = 16
const BLOCK_MIN_WIDTH = 84
const BLOCK_PAD = 14
const GAP = 34
const ROW_GAP = 26
const R = 10
const WRAP_AT = 22

interface Box {
  w: number
  h: number
  /** The signal line's height from the box's top. */
  mid: number
  place(ox: number, oy: number, flip: boolean, out: DiagramShape[]): void
}

function wrapLabel(label: string): string[] {
  const words = label.split(/\s+/).filter(Boolean)
  const lines: string[] = []
  for (const word of words) {
    const last = lines.at(-1)
    if (last !== undefined && (last + ' ' + word).length <= WRAP_AT) lines[lines.length - 1] = `${last} ${word}`
    else lines.push(word)
  }
  return lines.slice(0, 3)
}

const textWidth = (text: string) => text.length * CHAR_WIDTH

function blockBox(id: string, label: string | undefined): Box {
  const lines = [id, ...wrapLabel(label ?? '')]
  const w = Math.max(BLOCK_MIN_WIDTH, Math.ceil(Math.max(...lines.map(textWidth)) + 2 * BLOCK_PAD))
  const h = 14 + lines.length * LINE_HEIGHT
  return {
    w,
    h,
    mid: h / 2,
    place(ox, oy, _flip, out) {
      out.push({ kind: 'block', x: ox, y: oy, w, h, id, lines })
    },
  }
}

/** x of a local coordinate inside a box placed at ox, mirrored when the box lies on a return path. */
const mapX = (ox: number, w: number, flip: boolean) => (local: number) => (flip ? ox + w - local : ox + local)

function seriesBox(children: Box[]): Box {
  const mid = Math.max(...children.map((c) => c.mid))
  const w = children.reduce((sum, c) => sum + c.w, 0) + GAP * (children.length - 1)
  const h = Math.max(...children.map((c) => mid - c.mid + c.h))
  return {
    w,
    h,
    mid,
    place(ox, oy, flip, out) {
      const X = mapX(ox, w, flip)
      let cursor = 0
      children.forEach((child, i) => {
        const left = flip ? ox + w - cursor - child.w : ox + cursor
        child.place(left, oy + mid - child.mid, flip, out)
        cursor += child.w
        if (i < children.length - 1) {
          out.push({ kind: 'wire', points: [[X(cursor), oy + mid], [X(cursor + GAP), oy + mid]], arrow: true })
          cursor += GAP
        }
      })
    },
  }
}

function parallelBox(children: Box[], signs: Array<1 | -1>): Box {
  const inner = Math.max(...children.map((c) => c.w))
  const tops: number[] = []
  let h = 0
  for (const child of children) {
    tops.push(h)
    h += child.h + ROW_GAP
  }
  h -= ROW_GAP
  const mid = children[0]!.mid
  const branchX = 6
  const childX = branchX + GAP
  const junctionX = childX + inner + GAP + R
  const w = junctionX + R
  return {
    w,
    h,
    mid,
    place(ox, oy, flip, out) {
      const X = mapX(ox, w, flip)
      out.push({ kind: 'wire', points: [[X(0), oy + mid], [X(branchX), oy + mid]], arrow: false })
      out.push({ kind: 'branch', cx: X(branchX), cy: oy + mid })
      children.forEach((child, i) => {
        const y = oy + tops[i]! + child.mid
        const left = flip ? X(childX) - child.w : X(childX)
        child.place(left, oy + tops[i]!, flip, out)
        out.push({ kind: 'wire', points: [[X(branchX), oy + mid], [X(branchX), y], [X(childX), y]], arrow: true })
        const outX = childX + child.w
        const sign = (signs[i] ?? 1) === -1 ? '−' : '+'
        if (i === 0) {
          out.push({ kind: 'wire', points: [[X(outX), y], [X(junctionX - R), y]], arrow: true })
          out.push({ kind: 'sign', x: X(junctionX - R - 7), y: y - 8, text: sign })
        } else {
          out.push({ kind: 'wire', points: [[X(outX), y], [X(junctionX), y], [X(junctionX), oy + mid + R]], arrow: true })
          out.push({ kind: 'sign', x: X(junctionX - 10), y: y - 7, text: sign })
        }
      })
      out.push({ kind: 'junction', cx: X(junctionX), cy: oy + mid, r: R })
    },
  }
}

function feedbackBox(forward: Box, back: Box | null, sign: 1 | -1): Box {
  const junctionX = R
  const forwardX = 2 * R + GAP
  const branchX = forwardX + forward.w + GAP / 2
  const w = forwardX + forward.w + GAP
  const mid = forward.mid
  const returnTop = forward.h + ROW_GAP
  const returnMid = back ? returnTop + back.mid : returnTop
  const h = back ? returnTop + back.h : returnTop + 2
  return {
    w,
    h,
    mid,
    place(ox, oy, flip, out) {
      const X = mapX(ox, w, flip)
      out.push({ kind: 'junction', cx: X(junctionX), cy: oy + mid, r: R })
      out.push({ kind: 'sign', x: X(junctionX - R - 6), y: oy + mid - R - 3, text: '+' })
      out.push({ kind: 'sign', x: X(junctionX - R - 8), y: oy + mid + R + 13, text: sign === -1 ? '−' : '+' })
      forward.place(flip ? X(forwardX) - forward.w : X(forwardX), oy, flip, out)
      out.push({ kind: 'wire', points: [[X(junctionX + R), oy + mid], [X(forwardX), oy + mid]], arrow: true })
      out.push({ kind: 'wire', points: [[X(forwardX + forward.w), oy + mid], [X(w), oy + mid]], arrow: false })
      out.push({ kind: 'branch', cx: X(branchX), cy: oy + mid })
      const ry = oy + returnMid
      if (back) {
        // The return path runs right to left: laid out mirrored, centred under the forward path.
        const backX = forwardX + (forward.w - back.w) / 2
        back.place(flip ? X(backX) - back.w : X(backX), oy + returnTop, !flip, out)
        out.push({ kind: 'wire', points: [[X(branchX), oy + mid], [X(branchX), ry], [X(backX + back.w), ry]], arrow: true })
        out.push({ kind: 'wire', points: [[X(backX), ry], [X(junctionX), ry], [X(junctionX), oy + mid + R]], arrow: true })
      } else {
        out.push({ kind: 'wire', points: [[X(branchX), oy + mid], [X(branchX), ry], [X(junctionX), ry], [X(junctionX), oy + mid + R]], arrow: true })
      }
    },
  }
}

function boxOf(node: StructureNode, labels: Record<string, string | undefined>, depth: number): Box {
  if (depth > 40) return blockBox('…', 'nested too deep to draw')
  if (typeof node === 'string') return blockBox(node, labels[node])
  if (isSeries(node) && node.series.length) return seriesBox(node.series.map((child) => boxOf(child, labels, depth + 1)))
  if (isParallel(node) && node.parallel.length)
    return parallelBox(node.parallel.map((child) => boxOf(child, labels, depth + 1)), node.signs ?? node.parallel.map(() => 1))
  if (isFeedback(node)) {
    const back = node.feedback.return
    return feedbackBox(boxOf(node.feedback.forward, labels, depth + 1), back === null || back === undefined ? null : boxOf(back, labels, depth + 1), node.feedback.sign ?? -1)
  }
  return blockBox('?', 'not a structure node')
}

const LEAD = 46
const MARGIN = 12

/** The whole diagram: the reference R(s) coming in on the left, the output C(s) leaving on the right. */
export function layoutLoopDiagram(structure: StructureNode, labels: Record<string, string | undefined>): DiagramLayout {
  const box = boxOf(structure, labels, 0)
  const shapes: DiagramShape[] = []
  const top = MARGIN + 8
  const left = MARGIN + LEAD
  const y = top + box.mid
  box.place(left, top, false, shapes)
  shapes.push({ kind: 'wire', points: [[MARGIN, y], [left, y]], arrow: true })
  shapes.push({ kind: 'label', x: MARGIN, y: y - 8, text: 'R(s)', anchor: 'start' })
  shapes.push({ kind: 'wire', points: [[left + box.w, y], [left + box.w + LEAD, y]], arrow: true })
  shapes.push({ kind: 'label', x: left + box.w + LEAD, y: y - 8, text: 'C(s)', anchor: 'end' })
  return { width: left + box.w + LEAD + MARGIN, height: top + box.h + MARGIN + 6, shapes }
}
