//! Contour lines of a gridded field by marching squares (common practice).
//!
//! The field holds one value per grid node, `values[j * nx + i]` for column
//! `i` (along x) and row `j` (along y). Each square of four neighbouring
//! nodes is crossed by the level line on the edges whose ends lie on
//! different sides of the level; the crossing point is interpolated
//! linearly along the edge:
//!
//! ```text
//! t = (level - v_a) / (v_b - v_a),  point = a + t (b - a)
//! ```
//!
//! A square with all four edges crossed (a saddle) is resolved by the mean of
//! its four corners. Segments are then chained into polylines through their
//! shared edges, in a fixed order, so the output is deterministic. Squares
//! with a non-finite corner are left out.

/// Level lines of `values` (an `nx` x `ny` grid, row-major along x) at
/// `level`, as polylines in grid coordinates (x = column index, y = row
/// index, fractional). A closed line repeats its first point at the end.
pub(crate) fn contour_lines(
    values: &[f64],
    nx: usize,
    ny: usize,
    level: f64,
) -> Vec<Vec<(f64, f64)>> {
    if nx < 2 || ny < 2 || values.len() != nx * ny {
        return Vec::new();
    }
    let horizontal = ny * (nx - 1);
    let edges = horizontal + (ny - 1) * nx;
    let h = |i: usize, j: usize| j * (nx - 1) + i;
    let v = |i: usize, j: usize| horizontal + j * nx + i;
    let at = |i: usize, j: usize| values[j * nx + i];
    let above = |x: f64| x > level;

    // The crossing point on each edge, computed when first needed.
    let mut points: Vec<Option<(f64, f64)>> = vec![None; edges];
    let mut crossing = |edge: usize, (i0, j0): (usize, usize), (i1, j1): (usize, usize)| {
        if points[edge].is_none() {
            let (a, b) = (at(i0, j0), at(i1, j1));
            let t = ((level - a) / (b - a)).clamp(0.0, 1.0);
            points[edge] = Some((
                i0 as f64 + t * (i1 as f64 - i0 as f64),
                j0 as f64 + t * (j1 as f64 - j0 as f64),
            ));
        }
        edge
    };

    let mut segments: Vec<(usize, usize)> = Vec::new();
    for j in 0..ny - 1 {
        for i in 0..nx - 1 {
            let corners = [at(i, j), at(i + 1, j), at(i + 1, j + 1), at(i, j + 1)];
            if corners.iter().any(|c| !c.is_finite()) {
                continue;
            }
            let [a, b, c, d] = corners.map(above);
            let bottom = (a != b).then(|| crossing(h(i, j), (i, j), (i + 1, j)));
            let right = (b != c).then(|| crossing(v(i + 1, j), (i + 1, j), (i + 1, j + 1)));
            let top = (d != c).then(|| crossing(h(i, j + 1), (i, j + 1), (i + 1, j + 1)));
            let left = (a != d).then(|| crossing(v(i, j), (i, j), (i, j + 1)));
            let crossed: Vec<usize> = [bottom, right, top, left].into_iter().flatten().collect();
            match crossed.len() {
                2 => segments.push((crossed[0], crossed[1])),
                4 => {
                    let (bottom, right, top, left) =
                        (crossed[0], crossed[1], crossed[2], crossed[3]);
                    let centre = above(corners.iter().sum::<f64>() / 4.0);
                    if centre == a {
                        // Corner a's side joins corner c's through the centre:
                        // cut off corners b and d.
                        segments.push((bottom, right));
                        segments.push((top, left));
                    } else {
                        segments.push((bottom, left));
                        segments.push((right, top));
                    }
                }
                _ => {}
            }
        }
    }

    // Chain segments through shared edges. Each edge joins at most two segments.
    const NONE: usize = usize::MAX;
    let mut users = vec![[NONE; 2]; edges];
    for (s, &(e0, e1)) in segments.iter().enumerate() {
        for e in [e0, e1] {
            let slot = if users[e][0] == NONE { 0 } else { 1 };
            users[e][slot] = s;
        }
    }
    let mut used = vec![false; segments.len()];
    let other_end = |s: usize, e: usize| {
        if segments[s].0 == e {
            segments[s].1
        } else {
            segments[s].0
        }
    };
    let mut lines = Vec::new();
    for start in 0..segments.len() {
        if used[start] {
            continue;
        }
        used[start] = true;
        let mut forward = vec![segments[start].0, segments[start].1];
        let mut backward: Vec<usize> = Vec::new();
        for direction in 0..2 {
            let chain = if direction == 0 {
                &mut forward
            } else {
                &mut backward
            };
            let mut edge = if direction == 0 {
                segments[start].1
            } else {
                segments[start].0
            };
            loop {
                let next = users[edge].into_iter().find(|&s| s != NONE && !used[s]);
                let Some(s) = next else { break };
                used[s] = true;
                edge = other_end(s, edge);
                chain.push(edge);
            }
        }
        backward.reverse();
        backward.extend(forward);
        lines.push(
            backward
                .into_iter()
                .filter_map(|e| points[e])
                .collect::<Vec<_>>(),
        );
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_circle_gives_one_closed_line_at_the_right_radius() {
        let n = 41;
        let mut values = vec![0.0; n * n];
        for j in 0..n {
            for i in 0..n {
                let (x, y) = (i as f64 - 20.0, j as f64 - 20.0);
                values[j * n + i] = (x * x + y * y).sqrt();
            }
        }
        let lines = contour_lines(&values, n, n, 10.0);
        assert_eq!(lines.len(), 1);
        let line = &lines[0];
        assert_eq!(line.first(), line.last(), "closed");
        for &(x, y) in line {
            let r = ((x - 20.0).powi(2) + (y - 20.0).powi(2)).sqrt();
            assert!((r - 10.0).abs() < 0.1, "r = {r}");
        }
    }

    #[test]
    fn a_straight_boundary_gives_one_open_line() {
        let (nx, ny) = (5, 4);
        let values: Vec<f64> = (0..nx * ny).map(|k| (k % nx) as f64).collect();
        let lines = contour_lines(&values, nx, ny, 2.5);
        assert_eq!(lines.len(), 1);
        assert_eq!(lines[0].len(), ny);
        assert!(lines[0].iter().all(|&(x, _)| (x - 2.5).abs() < 1e-12));
    }

    #[test]
    fn saddles_and_gaps_do_not_break_it() {
        let values = [1.0, 0.0, 0.0, 1.0];
        assert_eq!(contour_lines(&values, 2, 2, 0.5).len(), 2);
        let values = [1.0, f64::NAN, 0.0, 1.0];
        assert!(contour_lines(&values, 2, 2, 0.5).is_empty());
        assert!(contour_lines(&[], 0, 0, 0.5).is_empty());
        assert!(contour_lines(&[1.0; 9], 3, 3, 0.5).is_empty());
    }
}
