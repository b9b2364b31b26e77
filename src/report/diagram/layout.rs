//! Layered placement of a directed graph drawn top to bottom.
//!
//! The classic four stages: (1) break cycles by reversing the edges a depth-first search
//! finds going back up its stack; (2) put every node on a layer by the longest path from the
//! sources, then pull each source down to just above its first successor; (3) split edges
//! that span several layers with dummy nodes and order every layer by barycentre sweeps plus
//! swaps of neighbours, keeping the order with the fewest crossings; (4) give each layer a
//! row and each node an x that pulls it towards its neighbours without overlapping. Every
//! edge is returned as a route of points from its source to its target; a reversed edge is
//! flagged so the drawing can bend it.

/// Vertical space between rows.
const ROW_GAP: f64 = 40.0;
/// Horizontal space between boxes in a row.
const NODE_GAP: f64 = 26.0;
/// Horizontal space next to a dummy (an edge passing through a row).
const DUMMY_GAP: f64 = 12.0;
/// Width reserved for an edge passing through a row.
const DUMMY_WIDTH: f64 = 6.0;
/// Space around the drawing.
const MARGIN: f64 = 16.0;

/// Where everything goes.
#[derive(Debug, Clone)]
pub(super) struct Placed {
    /// Centre of each input node.
    pub centres: Vec<(f64, f64)>,
    /// For each input edge, points from its source's border to its target's border (empty
    /// for a loop on one node).
    pub routes: Vec<Vec<(f64, f64)>>,
    /// For each input edge, true when it goes against the layering (it closes a cycle).
    pub back: Vec<bool>,
    /// Size of the drawing, margins included.
    pub width: f64,
    /// Height of the drawing, margins included.
    pub height: f64,
}

/// Place nodes of the given sizes (width, height) joined by directed `edges`. `ports[i]` is
/// the width of node i's top and bottom along which edge ends may be spread. The search that
/// breaks cycles starts from `roots` in order, then from sources, then from the rest.
pub(super) fn place(sizes: &[(f64, f64)], ports: &[f64], edges: &[(usize, usize)], roots: &[usize]) -> Placed {
    let n = sizes.len();
    let back = back_edges(n, edges, roots);
    let oriented: Vec<Option<(usize, usize)>> = edges
        .iter()
        .zip(&back)
        .map(|(&(u, v), &b)| match (u == v, b) {
            (true, _) => None,
            (false, true) => Some((v, u)),
            (false, false) => Some((u, v)),
        })
        .collect();
    let layer = layers(n, &oriented);

    // Dummy nodes split long edges so that every chain link joins neighbouring layers.
    let mut size = sizes.to_vec();
    let mut level = layer.clone();
    let mut chains: Vec<Vec<usize>> = Vec::with_capacity(edges.len());
    for e in &oriented {
        let Some((u, v)) = *e else {
            chains.push(Vec::new());
            continue;
        };
        let mut chain = vec![u];
        for l in layer[u] + 1..layer[v] {
            chain.push(size.len());
            size.push((DUMMY_WIDTH, 0.0));
            level.push(l);
        }
        chain.push(v);
        chains.push(chain);
    }
    let m = size.len();
    let dummy = |i: usize| i >= n;
    let mut up = vec![Vec::new(); m];
    let mut down = vec![Vec::new(); m];
    for c in &chains {
        for w in c.windows(2) {
            down[w[0]].push(w[1]);
            up[w[1]].push(w[0]);
        }
    }
    let rows_n = level.iter().max().map_or(0, |&l| l + 1);
    let mut rows: Vec<Vec<usize>> = vec![Vec::new(); rows_n];
    for (i, &l) in level.iter().enumerate() {
        rows[l].push(i);
    }
    order_rows(&mut rows, &up, &down, m);

    // Rows: height of the tallest box; y of each row's top.
    let row_h: Vec<f64> = rows
        .iter()
        .map(|r| r.iter().map(|&i| size[i].1).fold(0.0, f64::max))
        .collect();
    let mut row_top = Vec::with_capacity(rows_n);
    let mut y = MARGIN;
    for h in &row_h {
        row_top.push(y);
        y += h + ROW_GAP;
    }
    let height = if rows_n == 0 {
        2.0 * MARGIN
    } else {
        y - ROW_GAP + MARGIN
    };

    let x = columns(&rows, &size, &up, &down, &dummy);
    let left = (0..m).map(|i| x[i] - size[i].0 / 2.0).fold(f64::INFINITY, f64::min);
    let shift = if left.is_finite() { MARGIN - left } else { 0.0 };
    let x: Vec<f64> = x.iter().map(|v| v + shift).collect();
    let width = (0..m)
        .map(|i| x[i] + size[i].0 / 2.0 + MARGIN)
        .fold(2.0 * MARGIN, f64::max);
    let cy = |i: usize| row_top[level[i]] + row_h[level[i]] / 2.0;

    // Spread the ends of several edges along a box's top or bottom, in the order of the
    // other ends, so they do not meet in one point.
    let mut bottom_off = vec![0.0; chains.len()];
    let mut top_off = vec![0.0; chains.len()];
    for node in 0..n {
        let mut outs: Vec<usize> = (0..chains.len())
            .filter(|&c| chains[c].first() == Some(&node))
            .collect();
        outs.sort_by(|&a, &b| x[chains[a][1]].total_cmp(&x[chains[b][1]]));
        let port = ports.get(node).copied().unwrap_or(0.0);
        for (k, off) in spread(outs.len(), port).into_iter().enumerate() {
            bottom_off[outs[k]] = off;
        }
        let mut ins: Vec<usize> = (0..chains.len()).filter(|&c| chains[c].last() == Some(&node)).collect();
        ins.sort_by(|&a, &b| {
            let pa = chains[a][chains[a].len() - 2];
            let pb = chains[b][chains[b].len() - 2];
            x[pa].total_cmp(&x[pb])
        });
        for (k, off) in spread(ins.len(), port).into_iter().enumerate() {
            top_off[ins[k]] = off;
        }
    }
    let routes = chains
        .iter()
        .enumerate()
        .map(|(c, chain)| {
            let (Some(&u), Some(&v)) = (chain.first(), chain.last()) else {
                return Vec::new();
            };
            let mut pts = vec![(x[u] + bottom_off[c], cy(u) + size[u].1 / 2.0)];
            for &d in &chain[1..chain.len() - 1] {
                let l = level[d];
                pts.push((x[d], row_top[l]));
                if row_h[l] > 0.0 {
                    pts.push((x[d], row_top[l] + row_h[l]));
                }
            }
            pts.push((x[v] + top_off[c], cy(v) - size[v].1 / 2.0));
            if back[c] {
                pts.reverse();
            }
            pts
        })
        .collect();
    Placed {
        centres: (0..n).map(|i| (x[i], cy(i))).collect(),
        routes,
        back,
        width,
        height,
    }
}

/// Offsets of `k` edge ends along a side of usable width `w`.
fn spread(k: usize, w: f64) -> Vec<f64> {
    if k <= 1 {
        return vec![0.0; k];
    }
    let span = w.max(0.0).min((k - 1) as f64 * 16.0);
    (0..k).map(|i| -span / 2.0 + span * i as f64 / (k - 1) as f64).collect()
}

/// Which edges a depth-first search finds closing a cycle.
fn back_edges(n: usize, edges: &[(usize, usize)], roots: &[usize]) -> Vec<bool> {
    let mut out_edges = vec![Vec::new(); n];
    let mut indegree = vec![0usize; n];
    for (e, &(u, v)) in edges.iter().enumerate() {
        out_edges[u].push(e);
        if u != v {
            indegree[v] += 1;
        }
    }
    let starts = roots
        .iter()
        .copied()
        .filter(|&r| r < n)
        .chain((0..n).filter(|&i| indegree[i] == 0))
        .chain(0..n);
    // 0 unvisited, 1 on the stack, 2 done
    let mut state = vec![0u8; n];
    let mut back = vec![false; edges.len()];
    for s in starts {
        if state[s] != 0 {
            continue;
        }
        state[s] = 1;
        let mut stack = vec![(s, 0usize)];
        while let Some(&mut (u, ref mut next)) = stack.last_mut() {
            if let Some(&e) = out_edges[u].get(*next) {
                *next += 1;
                let v = edges[e].1;
                match state[v] {
                    0 => {
                        state[v] = 1;
                        stack.push((v, 0));
                    }
                    1 => back[e] = true,
                    _ => {}
                }
            } else {
                state[u] = 2;
                stack.pop();
            }
        }
    }
    back
}

/// Layer of each node: longest path from the sources over the (acyclic) oriented edges, then
/// sources moved down to sit just above their nearest successor.
fn layers(n: usize, edges: &[Option<(usize, usize)>]) -> Vec<usize> {
    let mut succ = vec![Vec::new(); n];
    let mut indegree = vec![0usize; n];
    for &(u, v) in edges.iter().flatten() {
        succ[u].push(v);
        indegree[v] += 1;
    }
    let mut layer = vec![0usize; n];
    let mut left = indegree.clone();
    let mut ready: Vec<usize> = (0..n).filter(|&i| left[i] == 0).collect();
    let mut topo = Vec::with_capacity(n);
    while let Some(u) = ready.pop() {
        topo.push(u);
        for &v in &succ[u] {
            layer[v] = layer[v].max(layer[u] + 1);
            left[v] -= 1;
            if left[v] == 0 {
                ready.push(v);
            }
        }
    }
    for &u in topo.iter().rev() {
        if indegree[u] == 0
            && let Some(first) = succ[u].iter().map(|&v| layer[v]).min()
        {
            layer[u] = first.saturating_sub(1).max(layer[u]);
        }
    }
    layer
}

/// Order the nodes within each row to reduce crossings.
fn order_rows(rows: &mut [Vec<usize>], up: &[Vec<usize>], down: &[Vec<usize>], m: usize) {
    let mut pos = vec![0usize; m];
    let index = |rows: &[Vec<usize>], pos: &mut [usize]| {
        for r in rows {
            for (k, &i) in r.iter().enumerate() {
                pos[i] = k;
            }
        }
    };
    index(rows, &mut pos);
    let mut best = rows.to_vec();
    let mut best_count = crossings(rows, down, &pos);
    for sweep in 0..24 {
        if best_count == 0 {
            break;
        }
        let downward = sweep % 2 == 0;
        let layers: Vec<usize> = if downward {
            (1..rows.len()).collect()
        } else {
            (0..rows.len().saturating_sub(1)).rev().collect()
        };
        for l in layers {
            let adj = if downward { up } else { down };
            let mut keyed: Vec<(f64, usize)> = rows[l]
                .iter()
                .map(|&i| {
                    let nb = &adj[i];
                    let b = if nb.is_empty() {
                        pos[i] as f64
                    } else {
                        nb.iter().map(|&j| pos[j] as f64).sum::<f64>() / nb.len() as f64
                    };
                    (b, i)
                })
                .collect();
            keyed.sort_by(|a, b| a.0.total_cmp(&b.0));
            rows[l] = keyed.into_iter().map(|k| k.1).collect();
            for (k, &i) in rows[l].iter().enumerate() {
                pos[i] = k;
            }
        }
        transpose(rows, up, down, &mut pos);
        let c = crossings(rows, down, &pos);
        if c < best_count {
            best_count = c;
            best = rows.to_vec();
        }
    }
    rows.clone_from_slice(&best);
}

/// Crossings between edges that join `a` (left) or `b` (right) to one neighbouring row.
fn pair_crossings(a: usize, b: usize, adj: &[Vec<usize>], pos: &[usize]) -> usize {
    adj[a]
        .iter()
        .map(|&x| adj[b].iter().filter(|&&y| pos[y] < pos[x]).count())
        .sum()
}

/// Swap neighbours in a row while that removes crossings.
fn transpose(rows: &mut [Vec<usize>], up: &[Vec<usize>], down: &[Vec<usize>], pos: &mut [usize]) {
    for _ in 0..8 {
        let mut improved = false;
        for row in rows.iter_mut() {
            for k in 0..row.len().saturating_sub(1) {
                let (a, b) = (row[k], row[k + 1]);
                let now = pair_crossings(a, b, up, pos) + pair_crossings(a, b, down, pos);
                let swapped = pair_crossings(b, a, up, pos) + pair_crossings(b, a, down, pos);
                if swapped < now {
                    row.swap(k, k + 1);
                    pos[a] = k + 1;
                    pos[b] = k;
                    improved = true;
                }
            }
        }
        if !improved {
            break;
        }
    }
}

/// Total crossings between consecutive rows.
fn crossings(rows: &[Vec<usize>], down: &[Vec<usize>], pos: &[usize]) -> usize {
    let mut total = 0;
    for r in rows {
        let links: Vec<(usize, usize)> = r
            .iter()
            .flat_map(|&u| down[u].iter().map(move |&v| (u, v)))
            .map(|(u, v)| (pos[u], pos[v]))
            .collect();
        for (i, a) in links.iter().enumerate() {
            total += links[i + 1..]
                .iter()
                .filter(|b| (a.0 < b.0 && a.1 > b.1) || (a.0 > b.0 && a.1 < b.1))
                .count();
        }
    }
    total
}

/// x of every node's centre: rows packed, then nodes pulled towards the mean x of their
/// neighbours above and below in turn, each row kept in order without overlap.
fn columns(
    rows: &[Vec<usize>],
    size: &[(f64, f64)],
    up: &[Vec<usize>],
    down: &[Vec<usize>],
    dummy: &dyn Fn(usize) -> bool,
) -> Vec<f64> {
    let mut x = vec![0.0; size.len()];
    let gap = |a: usize, b: usize| {
        let g = if dummy(a) || dummy(b) { DUMMY_GAP } else { NODE_GAP };
        (size[a].0 + size[b].0) / 2.0 + g
    };
    for r in rows {
        let mut at = 0.0;
        for (k, &i) in r.iter().enumerate() {
            if k > 0 {
                at += gap(r[k - 1], i);
            }
            x[i] = at;
        }
    }
    // Centre every row on the widest one before pulling.
    let mid = |r: &Vec<usize>, x: &[f64]| match (r.first(), r.last()) {
        (Some(&a), Some(&b)) => (x[a] + x[b]) / 2.0,
        _ => 0.0,
    };
    let centre = rows.iter().map(|r| mid(r, &x)).fold(0.0, f64::max);
    for r in rows {
        let d = centre - mid(r, &x);
        for &i in r {
            x[i] += d;
        }
    }
    for round in 0..16 {
        let adj = if round % 2 == 0 { up } else { down };
        for r in rows {
            let want: Vec<f64> = r
                .iter()
                .map(|&i| {
                    // Both sides once settled, so a node sits between what feeds it and what it feeds.
                    let nb: Vec<usize> = if round >= 8 {
                        up[i].iter().chain(&down[i]).copied().collect()
                    } else {
                        adj[i].clone()
                    };
                    if nb.is_empty() {
                        x[i]
                    } else {
                        nb.iter().map(|&j| x[j]).sum::<f64>() / nb.len() as f64
                    }
                })
                .collect();
            let placed = pack(r, &want, &gap);
            for (k, &i) in r.iter().enumerate() {
                x[i] = placed[k];
            }
        }
    }
    x
}

/// Positions as near `want` as the order and the gaps allow: the mean of a left-to-right and a
/// right-to-left packing (both keep every gap, so their mean does too).
fn pack(r: &[usize], want: &[f64], gap: &dyn Fn(usize, usize) -> f64) -> Vec<f64> {
    let k = r.len();
    let mut ltr = want.to_vec();
    for i in 1..k {
        ltr[i] = ltr[i].max(ltr[i - 1] + gap(r[i - 1], r[i]));
    }
    let mut rtl = want.to_vec();
    for i in (0..k.saturating_sub(1)).rev() {
        rtl[i] = rtl[i].min(rtl[i + 1] - gap(r[i], r[i + 1]));
    }
    ltr.iter().zip(&rtl).map(|(a, b)| (a + b) / 2.0).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn overlap(a: ((f64, f64), (f64, f64)), b: ((f64, f64), (f64, f64))) -> bool {
        let ((ax, ay), (aw, ah)) = a;
        let ((bx, by), (bw, bh)) = b;
        (ax - bx).abs() < (aw + bw) / 2.0 && (ay - by).abs() < (ah + bh) / 2.0
    }

    #[test]
    fn a_cycle_is_broken_once_and_boxes_do_not_overlap() {
        // a -> b -> c -> a, plus a source d -> c and a long edge a -> c
        let sizes = vec![(60.0, 30.0), (80.0, 30.0), (40.0, 20.0), (50.0, 30.0)];
        let edges = vec![(0, 1), (1, 2), (2, 0), (3, 2), (0, 2)];
        let p = place(&sizes, &[20.0; 4], &edges, &[0]);
        assert_eq!(p.back, vec![false, false, true, false, false]);
        for i in 0..sizes.len() {
            for j in i + 1..sizes.len() {
                assert!(
                    !overlap((p.centres[i], sizes[i]), (p.centres[j], sizes[j])),
                    "{i} and {j}"
                );
            }
            let (x, y) = p.centres[i];
            assert!(x - sizes[i].0 / 2.0 >= 0.0 && x + sizes[i].0 / 2.0 <= p.width);
            assert!(y - sizes[i].1 / 2.0 >= 0.0 && y + sizes[i].1 / 2.0 <= p.height);
        }
        // the back edge starts at c and ends at a; the source d sits just above c
        let r = &p.routes[2];
        assert!(r.len() >= 3, "a back edge spanning two layers passes a dummy");
        assert!(r[0].1 < p.centres[2].1 && r[r.len() - 1].1 > p.centres[0].1);
        assert!(p.centres[3].1 > p.centres[0].1);
    }

    #[test]
    fn empty_and_loops_do_not_panic() {
        let p = place(&[], &[], &[], &[]);
        assert!(p.centres.is_empty());
        let p = place(&[(10.0, 10.0)], &[], &[(0, 0)], &[5]);
        assert!(p.routes[0].is_empty());
    }

    #[test]
    fn crossings_are_removed_where_possible() {
        // two parallel chains given crosswise: a->d, b->c with rows [a b] [c d]
        let sizes = vec![(20.0, 10.0); 4];
        let edges = vec![(0, 3), (1, 2)];
        let p = place(&sizes, &[10.0; 4], &edges, &[]);
        let (a, b, c, d) = (p.centres[0].0, p.centres[1].0, p.centres[2].0, p.centres[3].0);
        assert_eq!(a < b, d < c, "edges do not cross");
    }
}
