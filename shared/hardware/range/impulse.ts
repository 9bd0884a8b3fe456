// Method: worst-case range of a linear DFG from its impulse responses. For y = sum_k h[k] x[n-k]
// with x in [lo, hi], the extremes are sum max(h,0)*hi + min(h,0)*lo and the mirror, reached by
// an input that follows the signs of h (the l1 norm of h times max|x| for symmetric ranges;
// common practice, no source). Responses are computed in doubles from zero state; a graph with
// loops is followed until its response dies away, and the rest is bounded as a geometric tail.
import type { ResolvedGraph } from '../reference';
import type { Design } from '../../types';
import { decimalOf, decimalToFraction } from '../arith';

/** Sums of the positive and negative parts of the impulse response from one input to each node. */
export interface ResponseSums {
  pos: Float64Array;
  neg: Float64Array;
}

export interface ImpulseResult {
  /** Per input node index: the response sums at every node; null when a response does not die away. */
  byInput: Map<number, ResponseSums>;
  /** Samples followed (the longest response). */
  samples: number;
  /** Why there is no bound, when byInput is empty for a reason. */
  unbounded?: string;
}

/** Whether every operation is linear in its operands: no product of two signals. */
export function isLinear(graph: ResolvedGraph): boolean {
  return graph.nodes.every((n) => n.kind !== 'op' || n.op !== 'mul' || n.operands.length <= 1);
}

const coefValue = (c: number | string | null): number => {
  if (c === null) return 1;
  const q = decimalToFraction(decimalOf(c));
  return Number(q.num) / Number(q.den);
};

/** Longest response followed; a response still alive after it counts as not dying away. */
export const MAX_RESPONSE = 100_000;
/** The response has died away when a window of it sums to less than this share of the sum so far. */
const TAIL = 1e-10;

export function impulseSums(design: Design, graph: ResolvedGraph, maxWork = 5e7): ImpulseResult {
  const n = graph.nodes.length;
  const src = design.edges.map((e) => graph.index.get(e.from)!);
  const delays = design.edges.map((e) => e.delays);
  const maxDelay = delays.reduce((m, d) => Math.max(m, d), 0);
  const hasLoop = loopsThroughDelays(design, graph);
  // Without loops a response ends after the delays of the longest path, at most all of them.
  const finiteLength = Math.min(n * maxDelay, delays.reduce((a, b) => a + b, 0));
  const inputs = graph.nodes.map((x, i) => (x.kind === 'input' ? i : -1)).filter((i) => i >= 0);
  const byInput = new Map<number, ResponseSums>();
  let samples = 0;
  let work = 0;
  const H = maxDelay + 1; // history ring long enough for the longest delay
  const next: number[][] = Array.from({ length: n }, () => []);
  design.edges.forEach((e, i) => next[src[i]].push(graph.index.get(e.to)!));
  const coef = graph.nodes.map((node) => (node.kind === 'op' && (node.op === 'gain' || node.op === 'mul') ? coefValue(node.coefficient) : 1));
  for (const x of inputs) {
    // Only what the input reaches responds to it.
    const reach = new Uint8Array(n);
    reach[x] = 1;
    const stack = [x];
    while (stack.length) for (const w of next[stack.pop()!]) if (!reach[w]) (reach[w] = 1), stack.push(w);
    const order = graph.order.filter((v) => reach[v]);
    const ring = new Float64Array(n * H);
    const pos = new Float64Array(n);
    const neg = new Float64Array(n);
    let total = 0;
    let window = 0;
    let prevWindow = Infinity;
    const win = new Float64Array(n);
    const prevWin = new Float64Array(n);
    const W = Math.max(64, 2 * H);
    let it = 0;
    let done = false;
    for (; it < MAX_RESPONSE; it++) {
      work += order.length;
      if (work > maxWork) return { byInput: new Map(), samples: it, unbounded: `the impulse responses need more than ${maxWork.toExponential(0)} node evaluations` };
      const slot = it % H;
      for (const v of order) {
        const node = graph.nodes[v];
        let val = 0;
        if (node.kind === 'input') val = v === x && it === 0 ? 1 : 0;
        else {
          const opsE = node.operands;
          const at = (k: number) => {
            const e = opsE[k];
            const back = it - delays[e];
            return back >= 0 && reach[src[e]] ? ring[src[e] * H + (back % H)] : 0;
          };
          if (node.kind === 'output') val = opsE.length ? at(0) : 0;
          else {
            switch (node.op) {
              case 'add':
                for (let k = 0; k < opsE.length; k++) val += at(k);
                break;
              case 'sub':
                val = at(0);
                for (let k = 1; k < opsE.length; k++) val -= at(k);
                break;
              case 'neg':
                val = -at(0);
                break;
              case 'pass':
                val = at(0);
                break;
              case 'gain':
              case 'mul':
                val = at(0) * coef[v];
                break;
            }
          }
        }
        ring[v * H + slot] = val;
        if (val > 0) pos[v] += val;
        else neg[v] += val;
        const a = Math.abs(val);
        total += a;
        window += a;
        win[v] += a;
      }
      // A graph without loops has a response no longer than its delays: exact after that.
      if (!hasLoop && it >= finiteLength) {
        done = true;
        break;
      }
      if (hasLoop && (it + 1) % W === 0) {
        // A response past 10^100 is growing without end: no bound, and no need to follow it further.
        if (!Number.isFinite(total) || total > 1e100) break;
        if (window <= TAIL * total && window < prevWindow) {
          // Past the last window, each node's response is bounded by a geometric series at the
          // decay rate of its last two windows, added to both sides (docs/analysis.md).
          for (const v of order) {
            if (win[v] === 0) continue;
            const rho = prevWin[v] > 0 ? win[v] / prevWin[v] : 1;
            const tail = rho < 1 ? (win[v] * rho) / (1 - rho) : win[v] * W;
            pos[v] += tail;
            neg[v] -= tail;
          }
          done = true;
          break;
        }
        prevWindow = window;
        window = 0;
        prevWin.set(win);
        win.fill(0);
      }
    }
    samples = Math.max(samples, it + 1);
    if (!done) return { byInput: new Map(), samples, unbounded: `the impulse response from input ${graph.nodes[x].id} does not die away within ${MAX_RESPONSE.toLocaleString('en-US')} samples (a loop that is unstable or on the edge of stability)` };
    byInput.set(x, { pos, neg });
  }
  return { byInput, samples };
}

/** Whether the graph has a loop at all (through delays; delay-free loops are refused earlier). */
function loopsThroughDelays(design: Design, graph: ResolvedGraph): boolean {
  const n = graph.nodes.length;
  const next: number[][] = Array.from({ length: n }, () => []);
  for (const e of design.edges) next[graph.index.get(e.from)!].push(graph.index.get(e.to)!);
  const state = new Uint8Array(n);
  for (let s = 0; s < n; s++) {
    if (state[s]) continue;
    const stack: [number, number][] = [[s, 0]];
    state[s] = 1;
    while (stack.length) {
      const top = stack[stack.length - 1];
      const [v, k] = top;
      if (k < next[v].length) {
        top[1]++;
        const w = next[v][k];
        if (state[w] === 1) return true;
        if (state[w] === 0) {
          state[w] = 1;
          stack.push([w, 0]);
        }
      } else {
        state[v] = 2;
        stack.pop();
      }
    }
  }
  return false;
}
