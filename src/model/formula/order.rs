//! The order in which formula measurands are computed: each after every formula it uses
//! (a topological sort, depth-first in file order; Tarjan 1976), refusing cycles.

/// A cycle of formulas that use each other.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Cycle {
    /// The formulas on the cycle in the order they use each other, the first repeated at the end.
    pub(crate) path: Vec<usize>,
    /// The formula whose reference closes the cycle.
    pub(crate) at: usize,
    /// Which of its references (an index into its dependency list) closes it.
    pub(crate) edge: usize,
}

/// Order the nodes `0..uses.len()` so that each comes after the nodes it uses. `uses[k]` lists
/// what node k refers to, one entry per reference: `Some(j)` for another node, `None` for
/// something outside the ordering (an input, a chain measurand). Depth-first from node 0, the
/// references in their order; a node is placed once all it uses are. Iterative, so any depth of
/// chained formulas is sorted without deep recursion.
pub(crate) fn topological_order(uses: &[Vec<Option<usize>>]) -> Result<Vec<usize>, Cycle> {
    const NEW: u8 = 0;
    const ON_PATH: u8 = 1;
    const DONE: u8 = 2;
    let mut state = vec![NEW; uses.len()];
    let mut order = Vec::with_capacity(uses.len());
    // The depth-first path: (node, next reference to follow).
    let mut path: Vec<(usize, usize)> = Vec::new();
    for root in 0..uses.len() {
        if state[root] != NEW {
            continue;
        }
        state[root] = ON_PATH;
        path.push((root, 0));
        while let Some(&mut (k, ref mut next)) = path.last_mut() {
            let edge = *next;
            if edge == uses[k].len() {
                path.pop();
                state[k] = DONE;
                order.push(k);
                continue;
            }
            *next += 1;
            let Some(dep) = uses[k][edge] else { continue };
            match state[dep] {
                ON_PATH => {
                    let start = path.iter().position(|p| p.0 == dep).unwrap_or(0);
                    let mut cycle: Vec<usize> = path[start..].iter().map(|p| p.0).collect();
                    cycle.push(dep);
                    return Err(Cycle {
                        path: cycle,
                        at: k,
                        edge,
                    });
                }
                NEW => {
                    state[dep] = ON_PATH;
                    path.push((dep, 0));
                }
                _ => {}
            }
        }
    }
    Ok(order)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Each node comes after what it uses; unrelated references are ignored [common practice].
    #[test]
    fn orders_and_refuses_cycles() {
        // 0 uses 2, 2 uses 1, 1 uses nothing of the ordering.
        let uses = vec![vec![Some(2), None], vec![None], vec![Some(1)]];
        assert_eq!(topological_order(&uses).unwrap(), vec![1, 2, 0]);
        // 0 -> 1 -> 2 -> 0: the cycle is reported from where it starts, closed by 2's reference.
        let cyclic = vec![vec![Some(1)], vec![None, Some(2)], vec![Some(0)]];
        let c = topological_order(&cyclic).unwrap_err();
        assert_eq!(c.path, vec![0, 1, 2, 0]);
        assert_eq!((c.at, c.edge), (2, 0));
        // A self-reference.
        let own = vec![vec![Some(0)]];
        assert_eq!(topological_order(&own).unwrap_err().path, vec![0, 0]);
        // A long chain (each uses the next) sorts without deep recursion.
        let n = 200_000;
        let chain: Vec<Vec<Option<usize>>> = (0..n)
            .map(|k| if k + 1 < n { vec![Some(k + 1)] } else { vec![] })
            .collect();
        let order = topological_order(&chain).unwrap();
        assert_eq!(order[0], n - 1);
        assert_eq!(order[n - 1], 0);
    }
}
