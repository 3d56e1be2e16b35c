//! Allen's interval algebra (Allen 1983), used to check spatial relations for contradiction per image axis.
//!
//! Owns: the thirteen basic relations as bits, the composition table read from
//! `grammar/allen_composition.txt` (validated, line-numbered errors), converse, path consistency on a small
//! network, and which interval relations each spatial relation allows on the horizontal, vertical and depth
//! axes.
//! Must not: know about classes or utterances; the conversation decides which intervals to compare.

use super::constraint::Relation;
use super::error::GrammarError;

/// The basic relations in table order.
pub const BASIC_NAMES: [&str; 13] = [
    "b", "m", "o", "s", "d", "f", "eq", "fi", "di", "si", "oi", "mi", "bi",
];

/// A set of basic relations, one bit per entry of `BASIC_NAMES`.
pub type RelationSet = u16;

/// Every basic relation.
pub const ALL: RelationSet = (1 << 13) - 1;

/// The set holding the named basic relations; unknown names are an error.
pub fn set_of(names: &[&str]) -> Result<RelationSet, String> {
    let mut set = 0;
    for name in names {
        let index = BASIC_NAMES
            .iter()
            .position(|basic| basic == name)
            .ok_or_else(|| format!("'{name}' is not one of Allen's thirteen relations"))?;
        set |= 1 << index;
    }
    Ok(set)
}

/// The names in a set, in table order.
pub fn names_of(set: RelationSet) -> Vec<&'static str> {
    BASIC_NAMES
        .iter()
        .enumerate()
        .filter(|(index, _)| set & (1 << index) != 0)
        .map(|(_, name)| *name)
        .collect()
}

/// The converse of a set (A r B  <=>  B converse(r) A): the table order is symmetric around `eq`.
pub fn converse(set: RelationSet) -> RelationSet {
    let mut out = 0;
    for index in 0..13 {
        if set & (1 << index) != 0 {
            out |= 1 << (12 - index);
        }
    }
    out
}

/// The composition table.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CompositionTable {
    table: [[RelationSet; 13]; 13],
}

/// The table shipped with the crate.
pub const EMBEDDED_TABLE: &str = include_str!("../../../grammar/allen_composition.txt");

impl CompositionTable {
    /// The embedded table; validated by a unit test.
    pub fn embedded() -> Result<CompositionTable, GrammarError> {
        CompositionTable::parse(EMBEDDED_TABLE, "allen_composition.txt")
    }

    /// Reads `r s : t ...` lines; all 169 pairs must appear exactly once.
    pub fn parse(text: &str, file: &str) -> Result<CompositionTable, GrammarError> {
        let mut table = [[0u16; 13]; 13];
        let mut seen = [[false; 13]; 13];
        for (index, raw_line) in text.lines().enumerate() {
            let line = raw_line.split('#').next().unwrap_or("").trim();
            if line.is_empty() {
                continue;
            }
            let error = |message: String| GrammarError::line(file, index + 1, message);
            let (pair, result) = line
                .split_once(':')
                .ok_or_else(|| error("expected 'r s : t ...'".to_string()))?;
            let pair: Vec<&str> = pair.split_whitespace().collect();
            if pair.len() != 2 {
                return Err(error(format!(
                    "expected two relations before ':', found {}",
                    pair.len()
                )));
            }
            let first = set_of(&pair[..1]).map_err(error)?.trailing_zeros() as usize;
            let second = set_of(&pair[1..]).map_err(error)?.trailing_zeros() as usize;
            let names: Vec<&str> = result.split_whitespace().collect();
            let set = set_of(&names).map_err(error)?;
            if set == 0 {
                return Err(error("a composition is never empty".to_string()));
            }
            if seen[first][second] {
                return Err(error(format!("{} {} appears twice", pair[0], pair[1])));
            }
            seen[first][second] = true;
            table[first][second] = set;
        }
        for (first, row) in seen.iter().enumerate() {
            for (second, present) in row.iter().enumerate() {
                if !present {
                    return Err(GrammarError::line(
                        file,
                        text.lines().count(),
                        format!("missing {} {}", BASIC_NAMES[first], BASIC_NAMES[second]),
                    ));
                }
            }
        }
        Ok(CompositionTable { table })
    }

    /// The composition of two basic relations (by index).
    pub fn basic(&self, first: usize, second: usize) -> RelationSet {
        self.table
            .get(first)
            .and_then(|row| row.get(second))
            .copied()
            .unwrap_or(ALL)
    }

    /// The composition of two sets: the union over their members.
    pub fn compose(&self, first: RelationSet, second: RelationSet) -> RelationSet {
        let mut out = 0;
        for i in 0..13 {
            if first & (1 << i) == 0 {
                continue;
            }
            for j in 0..13 {
                if second & (1 << j) != 0 {
                    out |= self.table[i][j];
                }
            }
        }
        out
    }

    /// Tightens a network by path consistency. Returns `false` if some pair becomes impossible.
    pub fn path_consistent(&self, network: &mut Network) -> bool {
        let size = network.size;
        let mut changed = true;
        while changed {
            changed = false;
            for k in 0..size {
                for i in 0..size {
                    for j in 0..size {
                        if i == j || i == k || j == k {
                            continue;
                        }
                        let through = self.compose(network.get(i, k), network.get(k, j));
                        let current = network.get(i, j);
                        let tightened = current & through;
                        if tightened != current {
                            if tightened == 0 {
                                return false;
                            }
                            network.set(i, j, tightened);
                            changed = true;
                        }
                    }
                }
            }
        }
        true
    }
}

/// A square network of relation sets between numbered intervals.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Network {
    size: usize,
    sets: Vec<RelationSet>,
}

impl Network {
    /// A network with no constraints.
    pub fn new(size: usize) -> Network {
        let mut sets = vec![ALL; size * size];
        for index in 0..size {
            sets[index * size + index] = 1 << 6;
        }
        Network { size, sets }
    }

    pub fn get(&self, from: usize, to: usize) -> RelationSet {
        self.sets.get(from * self.size + to).copied().unwrap_or(ALL)
    }

    /// Sets `from -> to` and its converse.
    pub fn set(&mut self, from: usize, to: usize, set: RelationSet) {
        if from < self.size && to < self.size {
            self.sets[from * self.size + to] = set;
            self.sets[to * self.size + from] = converse(set);
        }
    }

    /// Intersects `from -> to` with a set; returns `false` if it became empty.
    pub fn constrain(&mut self, from: usize, to: usize, set: RelationSet) -> bool {
        let tightened = self.get(from, to) & set;
        self.set(from, to, tightened);
        tightened != 0
    }
}

/// The image axes a spatial relation is checked on.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Axis {
    /// Left to right in the image.
    Horizontal,
    /// Bottom to top (up).
    Vertical,
    /// Near to far from the camera.
    Depth,
}

pub const AXES: [Axis; 3] = [Axis::Horizontal, Axis::Vertical, Axis::Depth];

/// The interval relations (subject to landmark) a spatial relation allows on each axis; `None` means the
/// relation says nothing about that axis. Negated relations are only modelled when they constrain one axis
/// (their complement is then exact); otherwise nothing is said.
///
/// These are our modelling choices: "left of" = before or meets on the horizontal axis; "on" = met-by or
/// overlapped-by vertically and overlapping horizontally; "inside" = within on all three axes; "next to"
/// and "between" are not checked.
pub fn axis_sets(relation: Relation, negated: bool) -> [Option<RelationSet>; 3] {
    let set = |names: &[&str]| set_of(names).ok();
    let overlapping = set(&["o", "s", "d", "f", "eq", "fi", "di", "si", "oi"]);
    let within = set(&["s", "d", "f", "eq"]);
    let sets: [Option<RelationSet>; 3] = match relation {
        Relation::LeftOf => [set(&["b", "m"]), None, None],
        Relation::RightOf => [set(&["bi", "mi"]), None, None],
        Relation::Above => [None, set(&["bi", "mi"]), None],
        Relation::Below => [None, set(&["b", "m"]), None],
        Relation::On => [overlapping, set(&["mi", "oi"]), None],
        Relation::Under => [overlapping, set(&["b", "m", "o"]), None],
        Relation::InFrontOf => [None, None, set(&["b", "m"])],
        Relation::Behind => [None, None, set(&["bi", "mi"])],
        Relation::Inside => [within, within, within],
        Relation::NextTo | Relation::Between => [None, None, None],
    };
    if !negated {
        return sets;
    }
    let constrained = sets.iter().filter(|set| set.is_some()).count();
    if constrained != 1 {
        return [None, None, None];
    }
    sets.map(|set| set.map(|set| ALL & !set))
}
