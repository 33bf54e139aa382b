// Fill-reducing ordering of a graph by nested dissection with level-structure
// separators: in each connected part, a breadth-first level structure is rooted
// at a pseudo-peripheral vertex, the smallest level near the middle becomes the
// separator (thinned to the vertices that really touch the far side), and the
// two sides are ordered first, recursively, the separator last. On planar-like
// survey networks this gives separators of O(√n) vertices and a factor with
// O(n log n) entries, where a banded (Cuthill–McKee) order gives O(n^1.5).
//
// Sources: George, A. (1973) Nested dissection of a regular finite element mesh,
// SIAM J. Numer. Anal. 10(2), 345–363; George, A. & Liu, J.W.H. (1981) Computer
// Solution of Large Sparse Positive Definite Systems, Prentice-Hall, ch. 8
// (automatic nested dissection with level structures) and §4.3 (pseudo-peripheral
// nodes by repeated breadth-first search, Gibbs–Poole–Stockmeyer) — from memory.
// No npm package offers a fill-reducing ordering (checked: cuthill-mckee,
// ml-sparse-matrix, @thi.ng/sparse, @thi.ng/adjacency; see ../README.md).

/** Undirected graph in compressed form: neighbours of v are adj[xadj[v] .. xadj[v+1]). */
export interface Graph {
  n: number
  xadj: Int32Array
  adj: Int32Array
}

/** parts at most this size are ordered as they come (their fill is negligible) */
const LEAF = 8

/**
 * Builds the graph whose edges join every pair of vertices that share a group
 * (e.g. the blocks of unknowns that appear together in one observation).
 */
export function graphFromGroups(n: number, groupPtr: Int32Array, groupIdx: Int32Array): Graph {
  const deg = new Int32Array(n + 1)
  const groups = groupPtr.length - 1
  for (let g = 0; g < groups; g++) {
    const len = groupPtr[g + 1] - groupPtr[g]
    for (let t = groupPtr[g]; t < groupPtr[g + 1]; t++) deg[groupIdx[t] + 1] += len - 1
  }
  for (let v = 0; v < n; v++) deg[v + 1] += deg[v]
  const fill = deg.slice(0, n)
  const raw = new Int32Array(deg[n])
  for (let g = 0; g < groups; g++) {
    for (let s = groupPtr[g]; s < groupPtr[g + 1]; s++)
      for (let t = groupPtr[g]; t < groupPtr[g + 1]; t++) if (s !== t && groupIdx[s] !== groupIdx[t]) raw[fill[groupIdx[s]]++] = groupIdx[t]
  }
  // sort and de-duplicate each neighbour list
  const xadj = new Int32Array(n + 1)
  const mark = new Int32Array(n).fill(-1)
  let o = 0
  for (let v = 0; v < n; v++) {
    const start = o
    for (let t = deg[v]; t < fill[v]; t++) {
      const w = raw[t]
      if (mark[w] !== v) {
        mark[w] = v
        raw[o++] = w
      }
    }
    raw.subarray(start, o).sort()
    xadj[v + 1] = o
  }
  return { n, xadj, adj: raw.slice(0, o) }
}

/** order[k] = vertex eliminated k-th. */
export function nestedDissection(g: Graph): Int32Array {
  const { n, xadj, adj } = g
  const order = new Int32Array(n)
  let filled = 0
  // part[v] = id of the part v currently belongs to; −1 once ordered
  const part = new Int32Array(n)
  const level = new Int32Array(n).fill(-1)
  const queue = new Int32Array(n)
  let nextId = 1

  /** BFS inside part id from root; returns the number of vertices reached (in queue) and the depth. */
  const bfs = (root: number, id: number): { count: number; depth: number } => {
    let head = 0
    let tail = 0
    queue[tail++] = root
    level[root] = 0
    let depth = 0
    while (head < tail) {
      const v = queue[head++]
      const lv = level[v]
      if (lv > depth) depth = lv
      for (let t = xadj[v]; t < xadj[v + 1]; t++) {
        const w = adj[t]
        if (part[w] === id && level[w] < 0) {
          level[w] = lv + 1
          queue[tail++] = w
        }
      }
    }
    return { count: tail, depth }
  }
  const resetLevels = (verts: Int32Array) => {
    for (let i = 0; i < verts.length; i++) level[verts[i]] = -1
  }

  // explicit stack of parts to order; a separator is pushed before its sides so
  // that it is placed after them (the order array is filled from the end)
  const stack: Int32Array[] = [Int32Array.from({ length: n }, (_, i) => i)]
  const tailOrder: Int32Array[] = []
  while (stack.length) {
    const verts = stack.pop()!
    const id = nextId++
    for (let i = 0; i < verts.length; i++) part[verts[i]] = id
    if (verts.length <= LEAF) {
      tailOrder.push(verts)
      continue
    }
    // first connected component of the part
    const first = bfs(verts[0], id)
    if (first.count < verts.length) {
      const comp = queue.slice(0, first.count)
      resetLevels(comp)
      const inComp = new Set<number>()
      for (const v of comp) inComp.add(v)
      const rest = verts.filter((v) => !inComp.has(v))
      stack.push(comp, rest)
      continue
    }
    // pseudo-peripheral root: restart from a vertex of the last level while the depth grows
    let root = queue[first.count - 1]
    let depth = first.depth
    resetLevels(verts)
    for (let rep = 0; rep < 4; rep++) {
      const r = bfs(root, id)
      const far = queue[r.count - 1]
      resetLevels(verts)
      if (r.depth <= depth && rep > 0) break
      depth = r.depth
      root = far
    }
    const { depth: h } = bfs(root, id)
    if (h < 2) {
      resetLevels(verts)
      tailOrder.push(verts)
      continue
    }
    const size = new Int32Array(h + 1)
    for (let i = 0; i < verts.length; i++) size[level[verts[i]]]++
    // smallest level whose sides both hold at least 30 % of the part
    let below = 0
    let best = -1
    let bestScore = Infinity
    for (let l = 0; l <= h; l++) {
      const above = verts.length - below - size[l]
      if (l > 0 && l < h && below >= 0.3 * verts.length && above >= 0.3 * verts.length) {
        const score = size[l] + Math.abs(below - above) / verts.length
        if (score < bestScore) {
          bestScore = score
          best = l
        }
      }
      below += size[l]
    }
    if (best < 0) {
      // no balanced level: take the middle one
      let acc = 0
      for (let l = 0; l <= h; l++) {
        acc += size[l]
        if (acc >= verts.length / 2) {
          best = Math.min(Math.max(l, 1), h - 1)
          break
        }
      }
    }
    const sideA: number[] = []
    const sideB: number[] = []
    const sep: number[] = []
    for (let i = 0; i < verts.length; i++) {
      const v = verts[i]
      const lv = level[v]
      if (lv < best) sideA.push(v)
      else if (lv > best) sideB.push(v)
      else {
        // a separator vertex with no neighbour beyond the level belongs to side A
        let touches = false
        for (let t = xadj[v]; t < xadj[v + 1]; t++) {
          const w = adj[t]
          if (part[w] === id && level[w] === best + 1) {
            touches = true
            break
          }
        }
        if (touches) sep.push(v)
        else sideA.push(v)
      }
    }
    resetLevels(verts)
    tailOrder.push(Int32Array.from(sep))
    stack.push(Int32Array.from(sideA), Int32Array.from(sideB))
  }
  // tailOrder holds separators (and leaves) in the order they were split off; each
  // separator must come after both of its sides: reversing gives a valid order
  for (let k = tailOrder.length - 1; k >= 0; k--) {
    const vs = tailOrder[k]
    for (let i = 0; i < vs.length; i++) order[filled++] = vs[i]
  }
  if (filled !== n) throw new Error(`ordering lost vertices (${filled} of ${n})`)
  return order
}

