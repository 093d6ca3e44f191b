//! Thinning what a figure cannot show: more marks than its plot area has pixel
//! columns would overlap, and 10⁵ marks make an SVG too slow to open. Each column
//! keeps its strongest mark, which is what the eye would see.

/// What thinning kept, for the figure's note.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Thinning {
    /// Marks in the plotted range.
    pub total: usize,
    /// Marks drawn.
    pub kept: usize,
    /// Number of columns (bins).
    pub bins: usize,
    /// Width of a column, in the axis unit.
    pub bin_width: f64,
}

impl Thinning {
    /// True when marks were left out.
    pub fn thinned(&self) -> bool {
        self.kept < self.total
    }
}

/// The indices of the items to draw: every item whose position `x(item)` lies in
/// `[lo, hi]` when there are at most `bins` of them, else the one with the largest
/// `weight(item)` in each of `bins` equal columns over the range. Indices come in
/// increasing order.
pub fn strongest_per_bin<T>(
    items: &[T],
    x: impl Fn(&T) -> f64,
    weight: impl Fn(&T) -> f64,
    (lo, hi): (f64, f64),
    bins: usize,
) -> (Vec<usize>, Thinning) {
    let inside: Vec<usize> = (0..items.len())
        .filter(|&i| {
            items
                .get(i)
                .is_some_and(|item| (lo..=hi).contains(&x(item)))
        })
        .collect();
    let bins = bins.max(1);
    let width = (hi - lo) / bins as f64;
    if inside.len() <= bins || (width.is_nan() || width <= 0.0) {
        let n = inside.len();
        return (
            inside,
            Thinning {
                total: n,
                kept: n,
                bins,
                bin_width: width,
            },
        );
    }
    let mut best: Vec<Option<(usize, f64)>> = vec![None; bins];
    for &i in &inside {
        let Some(item) = items.get(i) else { continue };
        let column = (((x(item) - lo) / width) as usize).min(bins - 1);
        let w = weight(item);
        if let Some(slot) = best.get_mut(column)
            && slot.is_none_or(|(_, b)| w > b)
        {
            *slot = Some((i, w));
        }
    }
    let kept: Vec<usize> = best.into_iter().flatten().map(|(i, _)| i).collect();
    let thinning = Thinning {
        total: inside.len(),
        kept: kept.len(),
        bins,
        bin_width: width,
    };
    (kept, thinning)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn few_items_are_all_kept_and_many_keep_the_strongest_per_column() {
        // Common practice, no source: a column keeps its largest value (the peak the
        // eye sees), so the strongest line of the whole range always survives.
        let items: Vec<(f64, f64)> = (0..1000)
            .map(|i| (i as f64 / 10.0, (i % 7) as f64))
            .collect();
        let (kept, t) = strongest_per_bin(&items, |p| p.0, |p| p.1, (0.0, 100.0), 2000);
        assert_eq!((kept.len(), t.thinned()), (1000, false));
        let (kept, t) = strongest_per_bin(&items, |p| p.0, |p| p.1, (0.0, 100.0), 10);
        assert_eq!((t.total, t.kept, t.bins), (1000, 10, 10));
        assert!(t.thinned());
        assert!(kept.iter().all(|&i| items[i].1 == 6.0), "{kept:?}");
        // Outside the range nothing is counted.
        let (kept, t) = strongest_per_bin(&items, |p| p.0, |p| p.1, (10.0, 10.25), 10);
        assert_eq!((kept, t.total), (vec![100, 101, 102], 3));
    }
}
