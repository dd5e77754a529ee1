//! Placing text labels inside a plotting box in pixel space: every label
//! gets the first of its candidate places that lies wholly inside the box,
//! clears the labels already placed and the reserved areas (legend, notes),
//! and covers the fewest data points; when none of its places fits, the
//! label slides up and down from its first place until it does.

/// A rectangle in pixels, `x0 ≤ x < x1`, `y0 ≤ y < y1`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Rect {
    /// Left edge.
    pub x0: i32,
    /// Top edge.
    pub y0: i32,
    /// Right edge (exclusive).
    pub x1: i32,
    /// Bottom edge (exclusive).
    pub y1: i32,
}

impl Rect {
    /// The rectangle of size `(w, h)` with its top-left corner at `at`.
    pub fn at(at: (i32, i32), (w, h): (i32, i32)) -> Rect {
        Rect {
            x0: at.0,
            y0: at.1,
            x1: at.0 + w,
            y1: at.1 + h,
        }
    }

    /// Whether the two rectangles share any pixel.
    pub fn overlaps(&self, o: &Rect) -> bool {
        self.x0 < o.x1 && o.x0 < self.x1 && self.y0 < o.y1 && o.y0 < self.y1
    }

    /// Whether `p` lies inside.
    pub fn holds(&self, p: (i32, i32)) -> bool {
        p.0 >= self.x0 && p.0 < self.x1 && p.1 >= self.y0 && p.1 < self.y1
    }
}

/// One label to place: its size and its candidate top-left corners, best first.
#[derive(Debug, Clone, PartialEq)]
pub struct Pending {
    /// Width and height in pixels.
    pub size: (i32, i32),
    /// Candidate top-left corners, in order of preference.
    pub candidates: Vec<(i32, i32)>,
}

/// Candidate top-left corners for a label of `size` beside the point
/// `anchor`, `gap` pixels away: right-below, right-above, left-above,
/// left-below, centred above and below, then the four corners again a
/// line further out.
pub fn around(anchor: (i32, i32), size: (i32, i32), gap: i32) -> Vec<(i32, i32)> {
    let (ax, ay) = anchor;
    let (w, h) = size;
    vec![
        (ax + gap, ay + gap),
        (ax + gap, ay - gap - h),
        (ax - gap - w, ay - gap - h),
        (ax - gap - w, ay + gap),
        (ax - w / 2, ay - gap - h),
        (ax - w / 2, ay + gap),
        (ax + gap, ay + gap + h),
        (ax + gap, ay - gap - 2 * h),
        (ax - gap - w, ay - gap - 2 * h),
        (ax - gap - w, ay + gap + h),
    ]
}

/// Places the labels in order inside a box of `bounds` (width, height); each
/// gets `Some(top-left)` or `None` when no place clears the others.
/// `obstacles` are pixels better left uncovered (data points, lines);
/// `reserved` areas are never covered.
pub fn place(
    labels: &[Pending],
    bounds: (i32, i32),
    obstacles: &[(i32, i32)],
    reserved: &[Rect],
) -> Vec<Option<(i32, i32)>> {
    let inside = |r: &Rect| r.x0 >= 0 && r.y0 >= 0 && r.x1 <= bounds.0 && r.y1 <= bounds.1;
    let mut taken: Vec<Rect> = reserved.to_vec();
    let mut out = Vec::with_capacity(labels.len());
    for l in labels {
        let free = |r: &Rect, taken: &[Rect]| inside(r) && !taken.iter().any(|t| t.overlaps(r));
        let covered = |r: &Rect| {
            let grown = Rect {
                x0: r.x0 - 2,
                y0: r.y0 - 2,
                x1: r.x1 + 2,
                y1: r.y1 + 2,
            };
            obstacles.iter().filter(|p| grown.holds(**p)).count()
        };
        // Cost: covered obstacles, then a small charge for a later preference.
        let mut best: Option<(usize, (i32, i32))> = None;
        for (k, c) in l.candidates.iter().enumerate() {
            let r = Rect::at(*c, l.size);
            if free(&r, &taken) {
                let cost = covered(&r) * 4 + k;
                if best.map_or(true, |(b, _)| cost < b) {
                    best = Some((cost, *c));
                }
            }
        }
        if best.is_some_and(|(cost, _)| cost >= 4) {
            // Every place covers something: try a few nearby places up and
            // down from the first two candidates, charged for the distance.
            let step = (l.size.1 / 2).max(1);
            for (j, &(x, y)) in l.candidates.iter().take(2).enumerate() {
                for k in 1..=6 {
                    for dir in [1, -1] {
                        let c = (x, y + dir * k * step);
                        let r = Rect::at(c, l.size);
                        if free(&r, &taken) {
                            let cost = covered(&r) * 4 + l.candidates.len() + 2 * k as usize + j;
                            if best.map_or(true, |(b, _)| cost < b) {
                                best = Some((cost, c));
                            }
                        }
                    }
                }
            }
        }
        if best.is_none() {
            // Slide from the first candidate (kept inside horizontally) in
            // steps of half a line, nearest first.
            if let Some(&(x, y)) = l.candidates.first() {
                let x = x.clamp(0, (bounds.0 - l.size.0).max(0));
                let step = (l.size.1 / 2).max(1);
                let steps = bounds.1 / step + 1;
                'slide: for k in 0..=steps {
                    for dir in [1, -1] {
                        let c = (x, y + dir * k * step);
                        let r = Rect::at(c, l.size);
                        if free(&r, &taken) {
                            best = Some((covered(&r), c));
                            break 'slide;
                        }
                    }
                }
            }
        }
        if let Some((_, c)) = best {
            taken.push(Rect::at(c, l.size));
        }
        out.push(best.map(|b| b.1));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_stay_inside_and_apart() {
        // Three labels anchored at the same point near the right edge of a 200×100 box.
        let size = (60, 14);
        let labels: Vec<Pending> = (0..3)
            .map(|_| Pending {
                size,
                candidates: around((190, 50), size, 6),
            })
            .collect();
        let placed = place(&labels, (200, 100), &[], &[]);
        let rects: Vec<Rect> = placed
            .iter()
            .map(|p| Rect::at(p.expect("every label placed"), size))
            .collect();
        for (i, r) in rects.iter().enumerate() {
            assert!(
                r.x0 >= 0 && r.x1 <= 200 && r.y0 >= 0 && r.y1 <= 100,
                "{r:?}"
            );
            for s in &rects[i + 1..] {
                assert!(!r.overlaps(s), "{r:?} overlaps {s:?}");
            }
        }
        // The first label flips to the left of the anchor: no room on the right.
        assert_eq!(rects[0].x1, 184);
    }

    #[test]
    fn reserved_areas_and_points_are_avoided() {
        let size = (40, 10);
        let l = Pending {
            size,
            candidates: around((50, 50), size, 4),
        };
        // Points fill the right-below place; the legend takes the right-above one.
        let pts: Vec<(i32, i32)> = (54..94).map(|x| (x, 58)).collect();
        let legend = Rect::at((54, 30), (40, 16));
        let placed = place(&[l], (200, 100), &pts, &[legend]);
        assert_eq!(placed, vec![Some((6, 36))]);
    }

    #[test]
    fn a_full_box_leaves_the_label_out() {
        let l = Pending {
            size: (50, 10),
            candidates: around((20, 20), (50, 10), 2),
        };
        let all = Rect::at((0, 0), (100, 40));
        assert_eq!(place(&[l], (100, 40), &[], &[all]), vec![None]);
    }
}
