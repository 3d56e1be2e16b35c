//! Matching an answer's words to the candidates of the question it answers.
//!
//! Owns: `pick` (a `words::Choice` and the focus sent with it -> one candidate, or why none).
//! Must not: read words (that is `words`) or look past the candidates' ids, descriptions and boxes.

use crate::language::constraint::Focus;
use crate::scene::BoundingBox;

use super::words::{normalise, Choice, Side};
use super::Candidate;

fn centre(bbox: &Option<BoundingBox>) -> (f64, f64) {
    match bbox {
        Some(b) => (
            0.5 * (f64::from(b.x0) + f64::from(b.x1)),
            0.5 * (f64::from(b.y0) + f64::from(b.y1)),
        ),
        None => (0.0, 0.0),
    }
}

/// Candidate indices ordered from a side: from the left is the question's own order (it names candidates
/// left to right); from the right, the reverse; from the top or bottom, by height in the picture.
fn ordered(candidates: &[Candidate], from: Side) -> Vec<usize> {
    let mut order: Vec<usize> = (0..candidates.len()).collect();
    match from {
        Side::Left | Side::Middle => {}
        Side::Right => order.reverse(),
        Side::Top => order.sort_by(|&a, &b| {
            centre(&candidates[a].bbox)
                .1
                .total_cmp(&centre(&candidates[b].bbox).1)
        }),
        Side::Bottom => order.sort_by(|&a, &b| {
            centre(&candidates[b].bbox)
                .1
                .total_cmp(&centre(&candidates[a].bbox).1)
        }),
    }
    order
}

fn listed(candidates: &[Candidate]) -> String {
    candidates
        .iter()
        .enumerate()
        .map(|(i, c)| format!("{}: {} (object {})", i + 1, c.description, c.object.0))
        .collect::<Vec<_>>()
        .join("; ")
}

/// The candidate an answer names, as an index into `candidates`, or what was wrong with the answer.
pub fn pick(
    choice: &Choice,
    candidates: &[Candidate],
    focus: Option<Focus>,
) -> Result<usize, String> {
    let count = candidates.len();
    match choice {
        Choice::Position { n, from } => {
            let order = ordered(candidates, *from);
            order.get(n.saturating_sub(1)).copied().ok_or_else(|| {
                format!(
                    "there are only {count} to choose from: {}",
                    listed(candidates)
                )
            })
        }
        Choice::Side(Side::Middle) => {
            if count % 2 == 1 {
                Ok(count / 2)
            } else {
                Err(format!(
                    "with {count} to choose from none is in the middle: {}",
                    listed(candidates)
                ))
            }
        }
        Choice::Side(side) => ordered(candidates, *side)
            .first()
            .copied()
            .ok_or_else(|| "there is nothing to choose from".to_string()),
        Choice::Object(id) => candidates
            .iter()
            .position(|c| c.object.0 == *id)
            .ok_or_else(|| {
                format!(
                    "object {id} is not one of those asked about: {}",
                    listed(candidates)
                )
            }),
        Choice::Described(words) => candidates
            .iter()
            .position(|c| normalise(&c.description) == *words)
            .ok_or_else(|| format!("none is {words}: {}", listed(candidates))),
        Choice::Pointed => match focus {
            Some(Focus::Object { id }) => candidates
                .iter()
                .position(|c| c.object == id)
                .ok_or_else(|| {
                    format!(
                        "object {} is not one of those asked about: {}",
                        id.0,
                        listed(candidates)
                    )
                }),
            Some(Focus::Pixel { x, y }) => candidates
                .iter()
                .enumerate()
                .filter_map(|(i, c)| c.bbox.map(|b| (i, b)))
                .filter(|(_, b)| b.x0 <= x && x <= b.x1 && b.y0 <= y && y <= b.y1)
                .min_by_key(|(_, b)| u64::from(b.x1 - b.x0) * u64::from(b.y1 - b.y0))
                .map(|(i, _)| i)
                .ok_or_else(|| {
                    format!(
                        "the point ({x}, {y}) is on none of those asked about: {}",
                        listed(candidates)
                    )
                }),
            None => Err(format!(
                "\"this one\" needs a point on the picture; or say which: {}",
                listed(candidates)
            )),
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ids::ObjectId;

    fn candidate(id: u32, x0: u32, y0: u32) -> Candidate {
        Candidate {
            object: ObjectId(id),
            class: None,
            description: format!("the one number {id}"),
            bbox: Some(BoundingBox {
                x0,
                y0,
                x1: x0 + 10,
                y1: y0 + 10,
            }),
        }
    }

    #[test]
    fn positions_sides_ids_and_points_pick_the_named_candidate() {
        // Named left to right, as questions name them.
        let candidates = [
            candidate(4, 0, 50),
            candidate(9, 40, 0),
            candidate(2, 80, 30),
        ];
        let position = |n, from| Choice::Position { n, from };
        assert_eq!(pick(&position(1, Side::Left), &candidates, None), Ok(0));
        assert_eq!(pick(&position(2, Side::Left), &candidates, None), Ok(1));
        assert_eq!(pick(&position(1, Side::Right), &candidates, None), Ok(2));
        assert_eq!(pick(&Choice::Side(Side::Top), &candidates, None), Ok(1));
        assert_eq!(pick(&Choice::Side(Side::Bottom), &candidates, None), Ok(0));
        assert_eq!(pick(&Choice::Side(Side::Middle), &candidates, None), Ok(1));
        assert_eq!(pick(&Choice::Object(2), &candidates, None), Ok(2));
        assert!(pick(&Choice::Object(5), &candidates, None).is_err());
        assert!(pick(&position(4, Side::Left), &candidates, None).is_err());
        let pointed = Some(Focus::Pixel { x: 85, y: 35 });
        assert_eq!(pick(&Choice::Pointed, &candidates, pointed), Ok(2));
        assert!(pick(&Choice::Pointed, &candidates, None).is_err());
    }
}
