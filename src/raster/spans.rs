//! Integer pixel span lists: sorted, disjoint, non-adjacent half-open ranges `[x0, x1)` of
//! one row. Composite shapes are combined here (add = union, subtract = difference), after
//! each part has been sampled at pixel centres, which is exactly point-sampling the
//! combined shape.

/// A half-open pixel range `[x0, x1)`.
pub type Span = (usize, usize);

/// Sorts and merges overlapping or touching spans in place; drops empty ones.
pub fn normalize(spans: &mut Vec<Span>) {
    spans.retain(|s| s.0 < s.1);
    if spans.len() < 2 {
        return;
    }
    spans.sort_unstable();
    let mut w = 0;
    for r in 1..spans.len() {
        if spans[r].0 <= spans[w].1 {
            spans[w].1 = spans[w].1.max(spans[r].1);
        } else {
            w += 1;
            spans[w] = spans[r];
        }
    }
    spans.truncate(w + 1);
}

/// `out = a ∪ b` for normalized lists.
pub fn union(a: &[Span], b: &[Span], out: &mut Vec<Span>) {
    out.clear();
    out.extend_from_slice(a);
    out.extend_from_slice(b);
    normalize(out);
}

/// `out = a \ b` for normalized lists.
pub fn difference(a: &[Span], b: &[Span], out: &mut Vec<Span>) {
    out.clear();
    let mut j = 0;
    for &(mut x0, x1) in a {
        while j < b.len() && b[j].1 <= x0 {
            j += 1;
        }
        let mut k = j;
        while k < b.len() && b[k].0 < x1 {
            if b[k].0 > x0 {
                out.push((x0, b[k].0));
            }
            x0 = x0.max(b[k].1);
            if x0 >= x1 {
                break;
            }
            k += 1;
        }
        if x0 < x1 {
            out.push((x0, x1));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn to_set(v: &[Span]) -> Vec<usize> {
        v.iter().flat_map(|&(a, b)| a..b).collect()
    }

    #[test]
    fn set_operations_match_pixel_sets() {
        let a = vec![(0, 5), (8, 20), (30, 31)];
        let b = vec![(3, 9), (10, 12), (19, 40)];
        let mut out = Vec::new();
        difference(&a, &b, &mut out);
        let want: Vec<usize> = to_set(&a)
            .into_iter()
            .filter(|x| !to_set(&b).contains(x))
            .collect();
        assert_eq!(to_set(&out), want);
        union(&a, &b, &mut out);
        assert_eq!(out, vec![(0, 40)]);
        let mut n = vec![(5, 6), (1, 2), (2, 3), (4, 4)];
        normalize(&mut n);
        assert_eq!(n, vec![(1, 3), (5, 6)]);
    }
}
