//! Clause rules read from `*.rules` files, and matching them against a sentence's chunks.
//!
//! Owns: the rule line syntax (`rule NAME: ITEM ... => ACTION`) and its validation with line-numbered
//! errors, the symbols and filters a pattern can use, the roles each action needs, and longest-match
//! selection (ties go to the earlier rule).
//! Must not: build constraints; it returns which chunks filled which roles, and `actions` does the rest.

use super::chunks::{Chunk, ChunkKind, Quantity};
use super::constraint::Relation;
use super::error::GrammarError;
use super::lexicon::parse_relation;

/// A chunk class a pattern item can name.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Symbol {
    NounPhrase,
    Be,
    Negation,
    There,
    Relation,
    Region,
    Room,
    Scene,
    Reciprocal,
    Number,
    Attributes,
    We,
    You,
    Called,
    Missed,
    Have,
    /// "holds", "contains".
    Holds,
    See,
    Remove,
    Count,
    Change,
    Pointing,
    As,
    And,
    Or,
    /// "where" inside a statement (a cleft).
    Where,
    /// A bare "left" or "right" ("L: mug, R: lamp").
    Side,
    /// A word nobody knows (a chunk no other symbol takes).
    Unknown,
    Separator,
    /// Zero-width: the clause opens here (the sentence's start or just after a pause).
    Start,
    /// Zero-width: the sentence opens here.
    First,
    /// Zero-width: the clause ends here (the sentence's end or just before a pause).
    End,
    /// Zero-width: the sentence ends here (no pause counts).
    Last,
}

/// A narrowing of a symbol.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Filter {
    /// A noun phrase with a stated quantity (a number, "no", "several"...), not just an article.
    Quantified,
    /// A noun phrase headed or determined by a deictic word.
    Deictic,
    /// A noun phrase with a stated number ("two", "exactly one", "a single"), not "no" or "some".
    Counted,
    /// A noun phrase with a relation phrase attached ("mug left of cabinet").
    Related,
    /// A noun phrase introduced by "a" or "an" ("is a towel").
    Indefinite,
    /// A bare noun phrase with colour or size words and a class ("green bottle").
    Described,
    /// A noun phrase naming a class, with no deictic word and no zero quantity ("mug", "the mug").
    Named,
    /// A class word alone, perhaps with "the", "a" or colour and size words: no quantity, deictic word,
    /// relation or region ("bowl", "a towel", "the red mug").
    Bare,
    /// A class named with no article, quantity or deictic word ("the vase"): the thing of a cleft.
    Definite,
    /// A relation phrase of one relation.
    Relation(Relation),
}

/// One alternative of a pattern item.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Alternative {
    pub symbol: Symbol,
    pub filter: Option<Filter>,
}

/// One pattern item.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PatternItem {
    pub alternatives: Vec<Alternative>,
    pub role: Option<String>,
    pub optional: bool,
}

/// What a rule builds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Action {
    Exist,
    /// "mugs by desk", "a cat to L of lamp": as `exist`, but the bare noun states no presence of its own.
    Located,
    Relabel,
    /// "bowl" alone while pointing: the whole note names the thing pointed at; with nothing pointed at it
    /// states nothing.
    RelabelPointed,
    RelabelCalled,
    RoomType,
    Relation,
    Place,
    Attribute,
    Have,
    Count,
    /// A further relation of the last relation's subject: ", not on the table", "and left of the lamp".
    RelationMore,
    /// "And so is the cat": the last relation stated of a new subject.
    RelationSame,
    /// "Remove the dog", "get rid of it": a class named is absent; a thing pointed at or mentioned before is
    /// not there (whatever it is shown as).
    Remove,
    /// "L: mug, R: lamp": the thing named after the left side word is left of the one after the right one.
    Sides,
    /// Words that hold together but state nothing the parser can use ("is in the kitchen" after an unknown
    /// subject): consumed so no part is misread, and reported as not understood.
    Unread,
}

impl Action {
    fn parse(name: &str) -> Option<Action> {
        Some(match name {
            "exist" => Action::Exist,
            "remove" => Action::Remove,
            "located" => Action::Located,
            "relabel" => Action::Relabel,
            "relabel_pointed" => Action::RelabelPointed,
            "relabel_called" => Action::RelabelCalled,
            "room_type" => Action::RoomType,
            "relation" => Action::Relation,
            "place" => Action::Place,
            "attribute" => Action::Attribute,
            "have" => Action::Have,
            "count" => Action::Count,
            "relation_more" => Action::RelationMore,
            "relation_same" => Action::RelationSame,
            "unread" => Action::Unread,
            "sides" => Action::Sides,
            _ => return None,
        })
    }

    /// Roles the action may read; the first list must all be present, the second are optional.
    fn roles(self) -> (&'static [&'static str], &'static [&'static str]) {
        match self {
            Action::Exist | Action::Located | Action::Remove => (&["np"], &["negated"]),
            Action::Relabel => (&[], &["target", "from", "to"]),
            Action::RelabelCalled => (&["target", "from"], &[]),
            Action::RelabelPointed => (&[], &["to", "from"]),
            Action::RoomType => (&["room"], &["negated"]),
            Action::Relation => (
                &["subject", "relation", "landmark"],
                &["negated", "denied", "denied_subject"],
            ),
            Action::Place => (&["subject"], &["room", "region"]),
            Action::Attribute => (&["subject"], &["attributes"]),
            Action::Have => (&["np"], &["owner", "negated", "holds"]),
            Action::Count => (&["number"], &["np", "negated", "denied"]),
            Action::RelationMore => (&["landmark"], &["relation", "negated"]),
            Action::RelationSame => (&["subject"], &["number"]),
            Action::Unread => (&[], &[]),
            Action::Sides => (&["side", "subject", "landmark"], &[]),
        }
    }
}

/// One clause rule.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Rule {
    pub name: String,
    pub items: Vec<PatternItem>,
    pub action: Action,
    /// The fewest chunks a match consumes (items neither optional nor a boundary): a rule is not tried
    /// where fewer chunks are left.
    pub min_chunks: usize,
}

impl Rule {
    /// Whether the rule's first item can only be "and" (such a rule may start at an "and").
    pub fn opens_with_and(&self) -> bool {
        self.items.first().is_some_and(|item| {
            !item.optional
                && item
                    .alternatives
                    .iter()
                    .all(|alternative| alternative.symbol == Symbol::And)
        })
    }
}

/// A successful match: the rule, how many chunks it covers, and which chunk filled each role.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Match<'rule> {
    pub rule: &'rule Rule,
    pub length: usize,
    pub roles: Vec<(&'rule str, usize)>,
}

impl Match<'_> {
    /// The chunk indices (absolute) that filled a role, in order.
    pub fn role(&self, name: &str) -> Vec<usize> {
        self.roles
            .iter()
            .filter(|(role, _)| *role == name)
            .map(|(_, index)| *index)
            .collect()
    }
}

/// Reads rule texts (name, text) in order.
pub fn parse_rules(files: &[(String, String)]) -> Result<Vec<Rule>, GrammarError> {
    let mut rules: Vec<Rule> = Vec::new();
    for (file, text) in files {
        for (index, raw_line) in text.lines().enumerate() {
            let line = raw_line.split('#').next().unwrap_or("").trim();
            if line.is_empty() {
                continue;
            }
            let rule =
                parse_rule(line).map_err(|message| GrammarError::line(file, index + 1, message))?;
            if rules.iter().any(|existing| existing.name == rule.name) {
                return Err(GrammarError::line(
                    file,
                    index + 1,
                    format!("rule '{}' is defined twice", rule.name),
                ));
            }
            rules.push(rule);
        }
    }
    if rules.is_empty() {
        return Err(GrammarError::Taxonomy("no rules were found".to_string()));
    }
    Ok(rules)
}

fn parse_rule(line: &str) -> Result<Rule, String> {
    let body = line
        .strip_prefix("rule ")
        .ok_or_else(|| format!("a rule line starts with 'rule ', found '{line}'"))?;
    let (name, rest) = body
        .split_once(':')
        .ok_or_else(|| "expected 'rule NAME: pattern => action'".to_string())?;
    let name = name.trim();
    if name.is_empty() || !name.chars().all(|c| c.is_ascii_lowercase() || c == '_') {
        return Err(format!(
            "rule name '{name}' must be lower case letters and underscores"
        ));
    }
    let (pattern, action_name) = rest
        .split_once("=>")
        .ok_or_else(|| format!("rule '{name}' has no '=> action'"))?;
    let action_name = action_name.trim();
    let action =
        Action::parse(action_name).ok_or_else(|| format!("unknown action '{action_name}'"))?;
    let mut items = Vec::new();
    for word in pattern.split_whitespace() {
        items.push(parse_item(word)?);
    }
    if items.is_empty() || items.iter().all(|item| item.optional) {
        return Err(format!("rule '{name}' needs at least one required item"));
    }
    let (required, optional) = action.roles();
    for item in &items {
        if let Some(role) = &item.role {
            if !required.contains(&role.as_str()) && !optional.contains(&role.as_str()) {
                return Err(format!("action '{action_name}' has no role '{role}'"));
            }
        }
    }
    for role in required {
        if !items.iter().any(|item| item.role.as_deref() == Some(*role)) {
            return Err(format!("action '{action_name}' needs a ':{role}' item"));
        }
    }
    if matches!(action, Action::Relabel | Action::RelabelPointed)
        && !items
            .iter()
            .any(|item| matches!(item.role.as_deref(), Some("from" | "to")))
    {
        return Err(format!(
            "action '{action_name}' needs a ':from' or ':to' item"
        ));
    }
    let min_chunks = items
        .iter()
        .filter(|item| !item.optional && !is_boundary(item))
        .count();
    Ok(Rule {
        name: name.to_string(),
        items,
        action,
        min_chunks,
    })
}

fn parse_item(word: &str) -> Result<PatternItem, String> {
    // `SYMBOL?:role`, `SYMBOL:role?` and `SYMBOL?` all mark an optional item.
    let (word, mut optional) = match word.strip_suffix('?') {
        Some(stripped) => (stripped, true),
        None => (word, false),
    };
    let (mut symbols, role) = match word.split_once(':') {
        Some((symbols, role)) if !role.is_empty() => (symbols, Some(role.to_string())),
        Some(_) => return Err(format!("item '{word}' has an empty role")),
        None => (word, None),
    };
    if let Some(stripped) = symbols.strip_suffix('?') {
        symbols = stripped;
        optional = true;
    }
    let mut alternatives = Vec::new();
    for alternative in symbols.split('|') {
        let (symbol_name, filter_name) = match alternative.split_once('[') {
            Some((symbol, filter)) => (
                symbol,
                Some(
                    filter
                        .strip_suffix(']')
                        .ok_or_else(|| format!("filter in '{alternative}' is missing ']'"))?,
                ),
            ),
            None => (alternative, None),
        };
        let symbol = match symbol_name {
            "NP" => Symbol::NounPhrase,
            "BE" => Symbol::Be,
            "NEG" => Symbol::Negation,
            "THERE" => Symbol::There,
            "REL" => Symbol::Relation,
            "REGION" => Symbol::Region,
            "ROOM" => Symbol::Room,
            "SCENE" => Symbol::Scene,
            "RECIPROCAL" => Symbol::Reciprocal,
            "NUMBER" => Symbol::Number,
            "ATTRIBUTES" => Symbol::Attributes,
            "WE" => Symbol::We,
            "YOU" => Symbol::You,
            "CALLED" => Symbol::Called,
            "MISSED" => Symbol::Missed,
            "HAVE" => Symbol::Have,
            "HOLDS" => Symbol::Holds,
            "SEE" => Symbol::See,
            "REMOVE" => Symbol::Remove,
            "COUNT" => Symbol::Count,
            "CHANGE" => Symbol::Change,
            "POINTING" => Symbol::Pointing,
            "AS" => Symbol::As,
            "AND" => Symbol::And,
            "OR" => Symbol::Or,
            "SEP" => Symbol::Separator,
            "WHERE" => Symbol::Where,
            "SIDE" => Symbol::Side,
            "UNKNOWN" => Symbol::Unknown,
            "START" => Symbol::Start,
            "FIRST" => Symbol::First,
            "END" => Symbol::End,
            "LAST" => Symbol::Last,
            other => return Err(format!("unknown symbol '{other}'")),
        };
        let filter = match (symbol, filter_name) {
            (_, None) => None,
            (Symbol::NounPhrase, Some("quantified")) => Some(Filter::Quantified),
            (Symbol::NounPhrase, Some("deictic")) => Some(Filter::Deictic),
            (Symbol::NounPhrase, Some("counted")) => Some(Filter::Counted),
            (Symbol::NounPhrase, Some("related")) => Some(Filter::Related),
            (Symbol::NounPhrase, Some("indefinite")) => Some(Filter::Indefinite),
            (Symbol::NounPhrase, Some("described")) => Some(Filter::Described),
            (Symbol::NounPhrase, Some("named")) => Some(Filter::Named),
            (Symbol::NounPhrase, Some("bare")) => Some(Filter::Bare),
            (Symbol::NounPhrase, Some("definite")) => Some(Filter::Definite),
            (Symbol::Relation | Symbol::Reciprocal, Some(name)) => {
                Some(Filter::Relation(parse_relation(name)?))
            }
            (_, Some(name)) => {
                return Err(format!("symbol '{symbol_name}' has no filter '{name}'"))
            }
        };
        alternatives.push(Alternative { symbol, filter });
    }
    Ok(PatternItem {
        alternatives,
        role,
        optional,
    })
}

fn accepts(alternative: &Alternative, chunk: &Chunk) -> bool {
    match (alternative.symbol, &chunk.kind) {
        (Symbol::NounPhrase, ChunkKind::NounPhrase(phrase)) => match alternative.filter {
            None => true,
            Some(Filter::Quantified) => !matches!(phrase.quantity, None | Some(Quantity::Some)),
            Some(Filter::Deictic) => phrase.deictic.is_some(),
            Some(Filter::Counted) => matches!(
                phrase.quantity,
                Some(Quantity::Exactly(_) | Quantity::AtLeast(_) | Quantity::AtMost(_))
            ),
            Some(Filter::Related) => !phrase.relations.is_empty() || phrase.region.is_some(),
            Some(Filter::Indefinite) => phrase.article,
            Some(Filter::Described) => {
                !phrase.attributes.is_empty()
                    && phrase.class.is_some()
                    && !phrase.article
                    && phrase.quantity.is_none()
                    && phrase.deictic.is_none()
                    && phrase.relations.is_empty()
                    && phrase.region.is_none()
            }
            Some(Filter::Named) => {
                phrase.class.is_some()
                    && phrase.deictic.is_none()
                    && !matches!(phrase.quantity, Some(Quantity::None | Quantity::Exactly(0)))
            }
            Some(Filter::Definite) => {
                phrase.class.is_some()
                    && !phrase.article
                    && phrase.quantity.is_none()
                    && phrase.deictic.is_none()
            }
            Some(Filter::Bare) => {
                phrase.class.is_some()
                    && phrase.quantity.is_none()
                    && phrase.deictic.is_none()
                    && phrase.relations.is_empty()
                    && phrase.region.is_none()
            }
            Some(Filter::Relation(_)) => false,
        },
        (Symbol::Relation, ChunkKind::Relation(relation))
        | (Symbol::Reciprocal, ChunkKind::Reciprocal(relation)) => match alternative.filter {
            Some(Filter::Relation(wanted)) => *relation == wanted,
            _ => true,
        },
        (Symbol::Be, ChunkKind::Be)
        | (Symbol::Negation, ChunkKind::Negation)
        | (Symbol::There, ChunkKind::There)
        | (Symbol::Region, ChunkKind::Region(_))
        | (Symbol::Room, ChunkKind::Room(_))
        | (Symbol::Scene, ChunkKind::Scene)
        | (Symbol::Number, ChunkKind::Number { .. })
        | (Symbol::Attributes, ChunkKind::Attributes(_))
        | (Symbol::We, ChunkKind::We)
        | (Symbol::You, ChunkKind::You)
        | (Symbol::Called, ChunkKind::Called)
        | (Symbol::Missed, ChunkKind::Missed)
        | (Symbol::Have, ChunkKind::Have)
        | (Symbol::Holds, ChunkKind::Holds)
        | (Symbol::See, ChunkKind::See)
        | (Symbol::Remove, ChunkKind::Remove)
        | (Symbol::Count, ChunkKind::Count)
        | (Symbol::Change, ChunkKind::Change)
        | (Symbol::Pointing, ChunkKind::Pointing)
        | (Symbol::As, ChunkKind::As)
        | (Symbol::And, ChunkKind::And)
        | (Symbol::Or, ChunkKind::Or)
        | (Symbol::Where, ChunkKind::Where)
        | (Symbol::Side, ChunkKind::Side(_))
        | (Symbol::Separator, ChunkKind::Separator)
        | (Symbol::Unknown, ChunkKind::Other) => true,
        _ => false,
    }
}

/// Whether an item is a boundary (start, first, end, last), which consumes no chunk.
fn is_boundary(item: &PatternItem) -> bool {
    item.alternatives.iter().any(|alternative| {
        matches!(
            alternative.symbol,
            Symbol::Start | Symbol::First | Symbol::End | Symbol::Last
        )
    })
}

/// Matches items against chunks from `position`; returns the chunks consumed and roles, longest first.
fn match_items<'rule>(
    items: &'rule [PatternItem],
    chunks: &[Chunk],
    position: usize,
    roles: &mut Vec<(&'rule str, usize)>,
) -> Option<usize> {
    let Some((item, rest)) = items.split_first() else {
        return Some(0);
    };
    if let Some(boundary) = item.alternatives.iter().find(|alternative| {
        matches!(
            alternative.symbol,
            Symbol::Start | Symbol::First | Symbol::End | Symbol::Last
        )
    }) {
        let at_boundary = match boundary.symbol {
            Symbol::First => position == 0,
            Symbol::Start => position == 0 || chunks[position - 1].kind == ChunkKind::Separator,
            Symbol::Last => position == chunks.len(),
            _ => chunks
                .get(position)
                .is_none_or(|chunk| chunk.kind == ChunkKind::Separator),
        };
        return if at_boundary || item.optional {
            match_items(rest, chunks, position, roles)
        } else {
            None
        };
    }
    let chunk = chunks.get(position);
    if let Some(chunk) = chunk {
        if item
            .alternatives
            .iter()
            .any(|alternative| accepts(alternative, chunk))
        {
            let mark = roles.len();
            if let Some(role) = &item.role {
                roles.push((role.as_str(), position));
            }
            if let Some(length) = match_items(rest, chunks, position + 1, roles) {
                return Some(length + 1);
            }
            roles.truncate(mark);
        }
    }
    if item.optional {
        return match_items(rest, chunks, position, roles);
    }
    None
}

/// The longest rule match at `position` (earlier rules win ties).
pub fn best_match<'rule>(
    rules: &'rule [Rule],
    chunks: &[Chunk],
    position: usize,
) -> Option<Match<'rule>> {
    let mut best: Option<Match<'rule>> = None;
    let left = chunks.len().saturating_sub(position);
    let mut roles = Vec::new();
    for rule in rules {
        if rule.min_chunks > left {
            continue;
        }
        roles.clear();
        if let Some(length) = match_items(&rule.items, chunks, position, &mut roles) {
            if length > 0 && best.as_ref().is_none_or(|current| length > current.length) {
                best = Some(Match {
                    rule,
                    length,
                    roles: roles.clone(),
                });
            }
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rules(text: &str) -> Result<Vec<Rule>, GrammarError> {
        parse_rules(&[("test.rules".to_string(), text.to_string())])
    }

    #[test]
    fn rule_errors_name_the_line() {
        let error =
            rules("# comment\nrule a: NP:np => exist\nrule b: NP:subject FLY => relation\n")
                .unwrap_err();
        assert_eq!(error.to_string(), "test.rules:3: unknown symbol 'FLY'");
        let error = rules("rule a: NP:subject BE => relation\n").unwrap_err();
        assert!(
            error.to_string().contains("needs a ':relation' item"),
            "{error}"
        );
        let error = rules("rule a: NP:np => exist\nrule a: NP:np => exist\n").unwrap_err();
        assert!(error.to_string().starts_with("test.rules:2:"), "{error}");
        assert!(rules("rule a: NP[tall]:np => exist\n").is_err());
    }

    #[test]
    fn optional_items_and_alternatives_parse() {
        let parsed =
            rules("rule r: NP[deictic]|WE BE REL[inside]? ROOM:room => room_type\n").unwrap();
        assert_eq!(parsed[0].items[0].alternatives.len(), 2);
        assert!(parsed[0].items[2].optional);
        assert_eq!(
            parsed[0].items[2].alternatives[0].filter,
            Some(Filter::Relation(Relation::Inside))
        );
    }
}
