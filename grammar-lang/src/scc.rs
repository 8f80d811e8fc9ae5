//! Strongly connected components of a directed graph: Tarjan's algorithm
//! (R. Tarjan, "Depth-first search and linear graph algorithms", SIAM J.
//! Computing 1(2), 1972), with an explicit stack so that a grammar with a
//! chain of a million symbols cannot overflow the call stack.
//!
//! One implementation serves every layer: the static checks (cycles of
//! unary rules), the engine's unary closure and its consistency analysis.

/// The strongly connected components of the part of a graph on the nodes
/// `0..n` that is reachable from `roots`, where `successors(v)` lists the
/// targets of the edges leaving `v`.
///
/// Components come sinks first: every edge leaving a component enters one
/// listed earlier. Each component lists its members in ascending order.
/// Runs in time linear in the nodes and edges visited.
pub fn strongly_connected<'a>(
    n: usize,
    roots: impl IntoIterator<Item = u32>,
    successors: impl Fn(u32) -> &'a [u32],
) -> Vec<Vec<u32>> {
    let mut t = Tarjan {
        index: vec![UNSEEN; n],
        low: vec![0; n],
        on_stack: vec![false; n],
        stack: Vec::new(),
        path: Vec::new(),
        counter: 0,
    };
    let mut out = Vec::new();
    for root in roots {
        if t.index[root as usize] != UNSEEN {
            continue;
        }
        t.visit(root);
        while let Some(&mut (v, ref mut next)) = t.path.last_mut() {
            if let Some(&w) = successors(v).get(*next) {
                *next += 1;
                if t.index[w as usize] == UNSEEN {
                    t.visit(w);
                } else if t.on_stack[w as usize] {
                    t.low[v as usize] = t.low[v as usize].min(t.index[w as usize]);
                }
                continue;
            }
            t.path.pop();
            if let Some(&(u, _)) = t.path.last() {
                t.low[u as usize] = t.low[u as usize].min(t.low[v as usize]);
            }
            if t.low[v as usize] == t.index[v as usize] {
                let mut component = Vec::new();
                while let Some(w) = t.stack.pop() {
                    t.on_stack[w as usize] = false;
                    component.push(w);
                    if w == v {
                        break;
                    }
                }
                component.sort_unstable();
                out.push(component);
            }
        }
    }
    out
}

const UNSEEN: u32 = u32::MAX;

/// The state of one run of Tarjan's algorithm.
struct Tarjan {
    /// Visit order of each node (`UNSEEN` before its visit).
    index: Vec<u32>,
    /// The smallest visit order reachable through the node's subtree and
    /// one edge back into the stack.
    low: Vec<u32>,
    on_stack: Vec<bool>,
    /// Visited nodes whose component is not complete yet.
    stack: Vec<u32>,
    /// The depth-first path: (node, position of the next successor to try).
    path: Vec<(u32, usize)>,
    counter: u32,
}

impl Tarjan {
    fn visit(&mut self, v: u32) {
        self.index[v as usize] = self.counter;
        self.low[v as usize] = self.counter;
        self.counter += 1;
        self.stack.push(v);
        self.on_stack[v as usize] = true;
        self.path.push((v, 0));
    }
}

/// The components of the whole graph on `0..n` (see [`strongly_connected`]).
pub fn all_components(n: usize, successors: &[Vec<u32>]) -> Vec<Vec<u32>> {
    strongly_connected(n, 0..n as u32, |v| &successors[v as usize])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn components_come_sinks_first() {
        // 0 → 1 ⇄ 2 → 3, 3 → 3
        let succ = vec![vec![1], vec![2], vec![1, 3], vec![3]];
        assert_eq!(all_components(4, &succ), vec![vec![3], vec![1, 2], vec![0]]);
    }

    #[test]
    fn only_what_the_roots_reach_is_visited() {
        // 0 → 1, 2 → 0: from 0, node 2 is never reached.
        let succ = [vec![1], vec![], vec![0]];
        assert_eq!(
            strongly_connected(3, [0], |v| &succ[v as usize]),
            vec![vec![1], vec![0]]
        );
    }

    #[test]
    fn a_long_chain_does_not_overflow_the_stack() {
        let n = 200_000;
        let succ: Vec<Vec<u32>> = (0..n)
            .map(|i| vec![if i + 1 < n { i as u32 + 1 } else { 0 }])
            .collect();
        let comps = all_components(n, &succ);
        assert_eq!(comps.len(), 1);
        assert_eq!(comps[0].len(), n);
    }

    #[test]
    fn every_edge_leaving_a_component_enters_an_earlier_one() {
        // A small deterministic pseudo-random graph (a 64-bit LCG with
        // Knuth's MMIX constants), checked against the definition.
        let n = 300;
        let mut state = 0x5cc_u64;
        let mut next = || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 33) as usize
        };
        let succ: Vec<Vec<u32>> = (0..n)
            .map(|_| (0..next() % 3).map(|_| (next() % n) as u32).collect())
            .collect();
        let comps = all_components(n, &succ);
        let mut order = vec![usize::MAX; n];
        for (c, comp) in comps.iter().enumerate() {
            for &v in comp {
                assert_eq!(order[v as usize], usize::MAX, "{v} in two components");
                order[v as usize] = c;
            }
        }
        // Reachability by brute force: u and v share a component exactly
        // when each reaches the other.
        let reach = |from: usize| {
            let mut seen = vec![false; n];
            let mut todo = vec![from];
            seen[from] = true;
            while let Some(u) = todo.pop() {
                for &w in &succ[u] {
                    if !seen[w as usize] {
                        seen[w as usize] = true;
                        todo.push(w as usize);
                    }
                }
            }
            seen
        };
        let reaches: Vec<Vec<bool>> = (0..n).map(reach).collect();
        for u in 0..n {
            for v in 0..n {
                let same = reaches[u][v] && reaches[v][u];
                assert_eq!(order[u] == order[v], same, "{u}, {v}");
            }
            for &w in &succ[u] {
                assert!(order[w as usize] <= order[u], "edge {u} → {w} goes later");
            }
        }
    }
}
