//! Actions: turning a matched rule's chunks into typed constraints, and binding deictic words.
//!
//! Owns: what each action builds (existence and counts, relabels, relations, places, attributes, room type,
//! "has" clauses, counts stated apart from their noun), how a noun phrase becomes a `Referent`, which deictic
//! words point at the focus or at the previous referent, and what the utterance itself mentioned: the last
//! class named (for "there are three of them") and a noun phrase no rule used (for a later "it").
//! Must not: look at scene content or the conversation history; the conversation binds "previous" later.

use crate::ids::ClassId;
use crate::taxonomy::{ClassGroup, Taxonomy};

use super::chunks::{AttachedRelation, Chunk, ChunkKind, NounPhrase, Quantity};
use super::constraint::{
    Attribute, Constraint, ConstraintKind, Count, Deixis, ImageRegion, Place, Referent, Relation,
    RelationClause, Span,
};
use super::lexicon::Side;
use super::rules::{Action, Match};

mod existence;
mod landmarks;

use existence::several;

/// Confidence of a constraint built only from known words.
pub const FULL_CONFIDENCE: f32 = 1.0;
/// Confidence when a word in the constraint was read as a misspelling.
pub const MISSPELLING_CONFIDENCE: f32 = 0.75;

/// Builds constraints for one utterance, left to right.
pub struct Builder<'t> {
    has_focus: bool,
    /// The class taxonomy: which things can hold or carry others, for a pronoun landmark.
    taxonomy: &'t Taxonomy,
    /// A referent has already been named in this utterance.
    seen_referent: bool,
    /// The class of the last noun phrase named in this utterance, used or not.
    last_class: Option<ClassId>,
    /// The last noun phrase with a class that no rule used ("you have the mug somewhere else"): a later "it"
    /// in the same utterance means it, since the conversation never saw it as a referent.
    unused_antecedent: Option<NounPhrase>,
    /// The last relation stated (subject, relation, landmarks), for ", not on the table".
    last_relation: Option<(Referent, Relation, Vec<Referent>)>,
    /// "The bowl and the plate are in the sink, not on the counter": the other subjects of the last relation
    /// stated of several, keyed by the span of the subject `last_relation` holds.
    coordinated: Option<(Span, Vec<Referent>)>,
    /// The owner of the last "X has a Y on it": a later "and a Z beside it" in the same utterance means X.
    owner: Option<NounPhrase>,
    /// The thing the last clause said exists ("you missed a mug"): a later "it's on the desk" in the same
    /// utterance, with nothing pointed at, means it.
    introduced: Option<NounPhrase>,
    /// The things this utterance named so far, latest last (a class named, or the thing pointed at): a
    /// pronoun landmark ("the bowl is on top of it") means the latest of them that is not its clause's
    /// subject.
    named: Vec<Referent>,
    /// A question of this utterance asked about an unnamed thing ("what's that by the desk?"): a later
    /// "it's a mug" with nothing pointed at may mean that thing, so it is not read as a relabel.
    asked_about_unnamed: bool,
    /// Where the last rule's match ended: a further relation ("and next to the lamp") is read only right
    /// after it, or after a pause or "and", never across words no rule read ("the mouse is next to it").
    matched_until: usize,
    pub constraints: Vec<Constraint>,
}

impl<'t> Builder<'t> {
    pub fn new(has_focus: bool, taxonomy: &'t Taxonomy) -> Builder<'t> {
        Builder {
            has_focus,
            taxonomy,
            seen_referent: false,
            last_class: None,
            unused_antecedent: None,
            last_relation: None,
            coordinated: None,
            owner: None,
            introduced: None,
            named: Vec::new(),
            asked_about_unnamed: false,
            matched_until: 0,
            constraints: Vec::new(),
        }
    }

    /// Notes a chunk of a question: what it names is what a later "one" or "it" of the utterance means.
    pub fn mention_asked(&mut self, chunk: &Chunk) {
        if let ChunkKind::NounPhrase(phrase) = &chunk.kind {
            if phrase.class.is_none() && phrase.deictic.is_some() {
                self.asked_about_unnamed = true;
            }
        }
        self.mention(chunk, false);
    }

    /// Notes a chunk the parser passed over: `used` when a rule consumed it.
    pub fn mention(&mut self, chunk: &Chunk, used: bool) {
        if let ChunkKind::NounPhrase(phrase) = &chunk.kind {
            self.name(phrase);
            if let Some(class) = phrase.class {
                self.last_class = Some(class);
                self.unused_antecedent = (!used).then(|| phrase.clone());
            }
        }
    }

    /// Records what a noun phrase names, then its landmarks ("the mug on the table": the table is latest).
    fn name(&mut self, phrase: &NounPhrase) {
        let pointed = phrase.class.is_none()
            && phrase.deictic.is_some_and(|word| !word.pronoun)
            && self.has_focus;
        if phrase.class.is_some() || pointed {
            self.named.push(Referent {
                class: phrase.class,
                deixis: pointed.then_some(Deixis::Focus),
                plural: phrase.plural,
                attributes: phrase.attributes.clone(),
                relations: Vec::new(),
                region: None,
                span: phrase.span,
            });
        }
        for attached in &phrase.relations {
            for landmark in &attached.landmarks {
                self.name(landmark);
            }
        }
    }

    /// Whether this utterance already said `class` is absent.
    fn said_absent(&self, class: Option<ClassId>) -> bool {
        class.is_some_and(|class| {
            self.constraints
                .iter()
                .any(|c| matches!(c.kind, ConstraintKind::Absent { class: said } if said == class))
        })
    }

    fn deixis_for(&self, pronoun: bool) -> Deixis {
        if pronoun && self.seen_referent {
            Deixis::Previous
        } else if self.has_focus {
            Deixis::Focus
        } else {
            Deixis::Previous
        }
    }

    /// Turns a noun phrase into a referent (dropping its quantity) and notes that a referent was named.
    fn referent(&mut self, phrase: &NounPhrase) -> Referent {
        let mut deixis = phrase.deictic.map(|word| self.deixis_for(word.pronoun));
        let mut class = phrase.class;
        let mut plural = phrase.plural;
        let mut attributes = phrase.attributes.clone();
        // "You have the mug somewhere else, it's on the table": with nothing pointed at, a pronoun means the
        // noun phrase the utterance named and no rule used.
        if let (Some(word), None, false, Some(antecedent)) = (
            phrase.deictic,
            phrase.class,
            self.has_focus,
            &self.unused_antecedent,
        ) {
            if word.pronoun {
                deixis = None;
                class = antecedent.class;
                plural = antecedent.plural;
                attributes.extend(antecedent.attributes.iter().copied());
            }
        }
        let relations = phrase
            .relations
            .iter()
            .map(|attached| RelationClause {
                relation: attached.relation,
                negated: false,
                landmarks: attached
                    .landmarks
                    .iter()
                    .map(|landmark| self.plain_referent(landmark))
                    .collect(),
            })
            .collect();
        self.seen_referent = true;
        Referent {
            class,
            deixis,
            plural,
            attributes,
            relations,
            region: phrase.region,
            span: phrase.span,
        }
    }

    /// A referent for a landmark: the same conversion without marking the utterance's referent state.
    fn plain_referent(&mut self, phrase: &NounPhrase) -> Referent {
        let seen = self.seen_referent;
        let referent = self.referent(phrase);
        self.seen_referent = seen;
        referent
    }

    /// The implicit target of "a towel, not a cat": what the operator points at.
    fn implicit_target(&mut self, span: Span) -> Referent {
        let deixis = self.deixis_for(false);
        self.seen_referent = true;
        Referent {
            class: None,
            deixis: Some(deixis),
            plural: false,
            attributes: Vec::new(),
            relations: Vec::new(),
            region: None,
            span,
        }
    }

    fn push(&mut self, kind: ConstraintKind, span: Span, misspelled: bool) {
        self.constraints.push(Constraint {
            kind,
            span,
            confidence: if misspelled {
                MISSPELLING_CONFIDENCE
            } else {
                FULL_CONFIDENCE
            },
            gloss: String::new(),
        });
    }

    /// States that `subject` stands (or, `negated`, does not stand) in `relation` to `landmarks`.
    fn push_relation(
        &mut self,
        subject: Referent,
        relation: Relation,
        negated: bool,
        landmarks: Vec<Referent>,
        span: Span,
        misspelled: bool,
    ) {
        self.push(
            ConstraintKind::Relation {
                subject,
                relation,
                negated,
                landmarks,
            },
            span,
            misspelled,
        );
    }

    /// States each of `attributes` of `target`.
    fn push_attributes(
        &mut self,
        target: &Referent,
        attributes: Vec<Attribute>,
        span: Span,
        misspelled: bool,
    ) {
        for attribute in attributes {
            self.push(
                ConstraintKind::Attribute {
                    target: target.clone(),
                    attribute,
                },
                span,
                misspelled,
            );
        }
    }

    /// Applies one matched rule to the sentence's chunks.
    pub fn apply(&mut self, found: &Match<'_>, chunks: &[Chunk], position: usize) {
        let previous_end = std::mem::replace(&mut self.matched_until, position + found.length);
        let matched = &chunks[position..position + found.length];
        let span = matched
            .iter()
            .map(|chunk| chunk.span)
            .reduce(Span::cover)
            .unwrap_or_default();
        let misspelled = matched.iter().any(|chunk| chunk.misspelled);
        let phrase = |index: usize| match &chunks[index].kind {
            ChunkKind::NounPhrase(phrase) => Some(phrase.clone()),
            _ => None,
        };
        let first_phrase = |role: &str| found.role(role).first().and_then(|&index| phrase(index));
        let negated = !found.role("negated").is_empty();
        match found.rule.action {
            Action::Exist => {
                // "There's neither a pillow nor a blanket": each listed noun phrase.
                for np in found.role("np").into_iter().filter_map(phrase) {
                    self.exist(&np, negated, span, misspelled);
                    // "There's a microwave on the counter and a bowl inside it": the thing said to exist,
                    // not its landmark, is what a later "it" means.
                    let mut thing = np.clone();
                    let relations = std::mem::take(&mut thing.relations);
                    for attached in &relations {
                        attached
                            .landmarks
                            .iter()
                            .for_each(|landmark| self.name(landmark));
                    }
                    self.name(&thing);
                }
            }
            Action::Remove => {
                for np in found.role("np").into_iter().filter_map(phrase) {
                    if np.deictic.is_some() {
                        // "There's no mug here, remove it": with nothing pointed at, a pronoun after an
                        // absence of the utterance says that absence again.
                        let pronoun = np.class.is_none() && np.deictic.is_some_and(|w| w.pronoun);
                        if pronoun && !self.has_focus && self.said_absent(self.last_class) {
                            continue;
                        }
                        let target = self.referent(&np);
                        // "The mug you show isn't there, get rid of it": the pronoun took the mug the
                        // utterance named; with nothing pointed at, removing it is its absence.
                        if let (None, Some(class), true, false) = (
                            target.deixis,
                            target.class,
                            target.relations.is_empty(),
                            self.has_focus,
                        ) {
                            if !self.said_absent(Some(class)) {
                                self.push(ConstraintKind::Absent { class }, span, misspelled);
                            }
                            continue;
                        }
                        self.push(
                            ConstraintKind::Relabel {
                                target,
                                from: np.class,
                                to: None,
                            },
                            span,
                            misspelled,
                        );
                    } else {
                        self.exist(&np, true, span, misspelled);
                    }
                }
            }
            Action::Located => {
                let demonstrative = |np: &NounPhrase| np.deictic.is_some_and(|word| !word.pronoun);
                if let Some(np) = first_phrase("np").filter(demonstrative) {
                    // "this R of door" in a note: the relations are stated of the thing pointed at.
                    // A pronoun ("you've got it in bits") is no such note.
                    self.deictic_relations(&np, span, misspelled);
                } else if let Some(np) = first_phrase("np") {
                    let stated = np.article || np.quantity.is_some();
                    let before = self.constraints.len();
                    self.exist(&np, negated, span, misspelled);
                    if !stated {
                        // A bare noun with a relation ("desk below window") says where, not that.
                        let mut index = before;
                        while index < self.constraints.len() {
                            if matches!(
                                self.constraints[index].kind,
                                ConstraintKind::Present { .. }
                            ) {
                                self.constraints.remove(index);
                            } else {
                                index += 1;
                            }
                        }
                    }
                }
            }
            Action::RelabelPointed => {
                // Only a note that is nothing but the name, said while pointing.
                if !self.has_focus || position + found.length != chunks.len() {
                    return;
                }
                // "bowl" names the pointed thing; "not cat" only denies what it is shown as.
                let to = first_phrase("to").and_then(|phrase| phrase.class);
                let from = first_phrase("from").and_then(|phrase| phrase.class);
                if to.is_none() && from.is_none() || from == to {
                    return;
                }
                let target = self.implicit_target(span);
                self.push(
                    ConstraintKind::Relabel { target, from, to },
                    span,
                    misspelled,
                );
            }
            Action::Relabel => {
                let target = first_phrase("target");
                let from = first_phrase("from");
                let to = first_phrase("to");
                // "Four of them are chairs", "I make it four chairs": a number of things is a count, never
                // the identity of one thing.
                if several(target.as_ref()) || several(to.as_ref()) {
                    return;
                }
                let asked = self.asked_about_unnamed && !self.has_focus;
                if asked
                    && target.as_ref().is_some_and(|target| {
                        target.class.is_none() && target.deictic.is_some_and(|word| word.pronoun)
                    })
                {
                    return;
                }
                let target_referent = match &target {
                    Some(target) => self.referent(target),
                    None => self.implicit_target(span),
                };
                let mut from_class = from.as_ref().and_then(|phrase| phrase.class);
                let mut to_class = to.as_ref().and_then(|phrase| phrase.class);
                if from.is_none() {
                    from_class = target.as_ref().and_then(|phrase| phrase.class);
                }
                // "that's no cat": a zero quantity on the new name denies it.
                if to
                    .as_ref()
                    .is_some_and(|phrase| phrase.quantity == Some(Quantity::None))
                {
                    from_class = to_class;
                    to_class = None;
                }
                if from_class.is_none() && to_class.is_none() {
                    return;
                }
                if from_class.is_some() && from_class == to_class {
                    return;
                }
                // "This pillow is not a cat" while pointing: the pointed thing is a pillow, not a cat.
                let mut target_referent = target_referent;
                if let (Some(Deixis::Focus), Some(named), Some(from), None) = (
                    target_referent.deixis,
                    target_referent.class,
                    from_class,
                    to_class,
                ) {
                    if named != from {
                        to_class = Some(named);
                        target_referent.class = None;
                    }
                }
                self.push(
                    ConstraintKind::Relabel {
                        target: target_referent,
                        from: from_class,
                        to: to_class,
                    },
                    span,
                    misspelled,
                );
            }
            Action::RelabelCalled => {
                if let (Some(target), Some(from)) = (first_phrase("target"), first_phrase("from")) {
                    let to = target.class;
                    let referent = self.referent(&target);
                    if from.class.is_some() && from.class != to {
                        self.push(
                            ConstraintKind::Relabel {
                                target: referent,
                                from: from.class,
                                to,
                            },
                            span,
                            misspelled,
                        );
                    }
                }
            }
            Action::RoomType => {
                // "Not the bedroom" says what the room is not, which no constraint states.
                if negated {
                    return;
                }
                if let Some(&index) = found.role("room").first() {
                    if let ChunkKind::Room(room) = chunks[index].kind {
                        // "The dog's in the hallway, yeah, the hallway": a room alone, said again right
                        // after a thing's place in it, repeats that place.
                        let repeated = found.length == 1
                            && self.constraints.last().is_some_and(|last| {
                                matches!(&last.kind, ConstraintKind::Place { place: Place::Room(placed), .. }
                                    if *placed == room)
                            });
                        if repeated {
                            return;
                        }
                        self.push(ConstraintKind::RoomType { room }, span, misspelled);
                    }
                }
            }
            Action::Relation => {
                // "On the counter, right of the sink, there's a bottle": two fronted places, each stated;
                // the thing said to exist is said so once.
                let relations = found.role("relation");
                let landmarks = found.role("landmark");
                if relations.len() == 2 && landmarks.len() == 2 {
                    let from = self.constraints.len();
                    for (relation, landmark) in relations.iter().zip(&landmarks) {
                        let mut single = found.clone();
                        single.roles.retain(|(role, index)| {
                            (*role != "relation" || index == relation)
                                && (*role != "landmark" || index == landmark)
                        });
                        self.apply(&single, chunks, position);
                    }
                    let mut index = from;
                    while index < self.constraints.len() {
                        let kind = &self.constraints[index].kind;
                        if self.constraints[from..index]
                            .iter()
                            .any(|c| &c.kind == kind)
                        {
                            self.constraints.remove(index);
                        } else {
                            index += 1;
                        }
                    }
                    return;
                }
                let subjects: Vec<NounPhrase> = found
                    .role("subject")
                    .into_iter()
                    .filter_map(phrase)
                    .collect();
                // "The plant and the lamp are by the sofa": one relation per coordinated subject.
                let mut others = Vec::new();
                for extra in subjects.iter().skip(1) {
                    let mut single = found.clone();
                    single.roles.retain(|(role, index)| {
                        *role != "subject" || chunks[*index].span == extra.span
                    });
                    self.apply(&single, chunks, position);
                    if let Some((subject, ..)) = &self.last_relation {
                        others.push(subject.clone());
                    }
                }
                // A pronoun subject ("the bag is on the floor and it's also by the door") stays the previous
                // referent, `^`, which the conversation binds to what the last constraint was about. A thing
                // only said to exist is no such referent: "you missed a mug, it's on the desk" (nothing
                // pointed at, no unused noun phrase) means the mug.
                let Some(mut subject) = first_phrase("subject") else {
                    return;
                };
                let only_said_to_exist = |introduced: &NounPhrase| {
                    self.constraints.last().is_some_and(|last| {
                        matches!(last.kind,
                            ConstraintKind::Present { class } | ConstraintKind::Count { class, .. }
                                if Some(class) == introduced.class)
                    })
                };
                if let (Some(word), None, false, None, Some(introduced)) = (
                    subject.deictic,
                    subject.class,
                    self.has_focus,
                    &self.unused_antecedent,
                    self.introduced.as_ref().filter(|np| only_said_to_exist(np)),
                ) {
                    if word.pronoun && subject.quantity.is_none() {
                        subject.deictic = None;
                        subject.class = introduced.class;
                        subject.plural = introduced.plural;
                    }
                }
                // "In the microwave there's a plate": a fronted place with "there is" or "a" says the
                // thing exists too.
                if found.rule.name.starts_with("relation_fronted")
                    && (subject.article || subject.quantity.is_some())
                {
                    self.exist(&subject, false, span, misspelled);
                }
                let relation =
                    found
                        .role("relation")
                        .first()
                        .and_then(|&index| match chunks[index].kind {
                            ChunkKind::Relation(relation) | ChunkKind::Reciprocal(relation) => {
                                Some(relation)
                            }
                            _ => None,
                        });
                let Some(relation) = relation else { return };
                let landmark_phrases: Vec<NounPhrase> = found
                    .role("landmark")
                    .into_iter()
                    .filter_map(phrase)
                    .collect();
                // "vase on shelf, NOT on tbl": a noted place before the pause is stated too, and the
                // subject is the thing itself.
                let subject_index = found.role("subject").first().copied();
                let noted = subject_index.is_some_and(|index| {
                    chunks.get(index + 1).map(|chunk| &chunk.kind) == Some(&ChunkKind::Separator)
                });
                if noted && !subject.relations.is_empty() {
                    let mut plain = subject.clone();
                    plain.quantity = None;
                    let relations = std::mem::take(&mut plain.relations);
                    let referent = self.referent(&plain);
                    for attached in relations {
                        let landmarks: Vec<Referent> = attached
                            .landmarks
                            .iter()
                            .map(|landmark| self.plain_referent(landmark))
                            .collect();
                        self.push_relation(
                            referent.clone(),
                            attached.relation,
                            false,
                            landmarks,
                            span,
                            misspelled,
                        );
                    }
                    subject.relations.clear();
                }
                // "None of them is on the desk": no thing of the class named last is.
                let mut negated = negated;
                if subject.class.is_none()
                    && subject
                        .deictic
                        .is_some_and(|word| word.pronoun && word.plural)
                    && subject.quantity.is_some()
                {
                    let Some(class) = self.last_class else { return };
                    if subject.quantity == Some(Quantity::None) {
                        negated = !negated;
                    }
                    subject.class = Some(class);
                    subject.deictic = None;
                    subject.plural = true;
                    subject.quantity = None;
                }
                self.count_of_subject(&subject, span, misspelled);
                if subject.class.is_some() && subject.quantity != Some(Quantity::None) {
                    self.introduced = Some(subject.clone());
                }
                let subject_referent = self.referent(&subject);
                let landmarks: Vec<Referent> = landmark_phrases
                    .iter()
                    .map(|landmark| self.landmark_referent(landmark, &subject, relation))
                    .collect();
                self.last_relation = Some((subject_referent.clone(), relation, landmarks.clone()));
                self.coordinated = (!others.is_empty()).then_some((subject_referent.span, others));
                // "The lamp, not the vase, is on the table": the denied subject, denied.
                if let (Some(denied), false) = (first_phrase("denied_subject"), negated) {
                    let denied = self.plain_referent(&denied);
                    self.push_relation(denied, relation, true, landmarks.clone(), span, misspelled);
                }
                // "Not the table: the towel is on the counter": the denied landmark, denied.
                if let (Some(denied), false, false) = (
                    first_phrase("denied"),
                    negated,
                    relation == Relation::Between,
                ) {
                    let denied = self.plain_referent(&denied);
                    self.push_relation(
                        subject_referent.clone(),
                        relation,
                        true,
                        vec![denied],
                        span,
                        misspelled,
                    );
                }
                self.push_relation(
                    subject_referent,
                    relation,
                    negated,
                    landmarks,
                    span,
                    misspelled,
                );
            }
            Action::RelationMore => {
                // ", not on the table", "and left of the lamp", ", not the sofa", ", not on it": the subject
                // of the last relation; no relation word repeats the last one, and "it" its landmark.
                // "Missed a mug, on the desk": with no relation yet, a further place is stated of the thing
                // the utterance just said exists.
                let stated_relation = !found.role("relation").is_empty();
                let adjacent = position == 0
                    || position == previous_end
                    || matches!(
                        chunks[position - 1].kind,
                        ChunkKind::Separator | ChunkKind::And | ChunkKind::Or
                    );
                if !adjacent {
                    return;
                }
                // Only right after the noun phrase and a pause: never across a word no rule read.
                let follows_the_thing = position >= 2
                    && chunks[position - 1].kind == ChunkKind::Separator
                    && matches!(&chunks[position - 2].kind, ChunkKind::NounPhrase(phrase)
                        if phrase.class.is_some()
                            && phrase.class == self.introduced.as_ref().and_then(|np| np.class));
                // "The plant's in the corner, next to the window": a further place of the thing just placed.
                // So is one after a thing's colour ("rug: blue, under tbl").
                // And one after a count in a note ("plates: 4, in sink"), of the things counted.
                let placed_or_described = match self.constraints.last().map(|last| &last.kind) {
                    Some(ConstraintKind::Place { subject, .. }) => Some(subject.clone()),
                    Some(ConstraintKind::Attribute { target, .. }) => Some(target.clone()),
                    // "mugs: 3 on desk": the same with no pause after the number.
                    Some(ConstraintKind::Count { class, count })
                        if self.last_relation.is_none()
                            && number_before(chunks, position).is_some() =>
                    {
                        Some(Referent {
                            class: Some(*class),
                            deixis: None,
                            plural: !matches!(count, Count::Exactly(1) | Count::AtMost(1)),
                            attributes: Vec::new(),
                            relations: Vec::new(),
                            region: None,
                            span: number_before(chunks, position)
                                .map_or(chunks[position - 1].span, |at| chunks[at].span),
                        })
                    }
                    _ => None,
                };
                if let (true, Some(subject)) = (stated_relation, placed_or_described) {
                    self.last_relation = Some((subject, Relation::On, Vec::new()));
                } else if self.last_relation.is_none() && stated_relation && follows_the_thing {
                    if let Some(introduced) = self.introduced.clone() {
                        let mut subject = introduced;
                        subject.quantity = None;
                        subject.relations.clear();
                        subject.region = None;
                        let subject = self.referent(&subject);
                        self.last_relation = Some((subject, Relation::On, Vec::new()));
                    }
                }
                let Some((subject, last, last_landmarks)) = self.last_relation.clone() else {
                    return;
                };
                // "The mug isn't on the desk or the shelf": after a denied relation, "or" denies the next
                // landmark too; after a stated one ("on the desk or the shelf") it states nothing.
                let mut negated = negated;
                if chunks[position].kind == ChunkKind::Or {
                    let denied = self.constraints.last().is_some_and(|last| {
                        matches!(last.kind, ConstraintKind::Relation { negated: true, .. })
                    });
                    if !denied {
                        return;
                    }
                    negated = true;
                }
                let relation = found
                    .role("relation")
                    .first()
                    .and_then(|&index| match chunks[index].kind {
                        ChunkKind::Relation(relation) => Some(relation),
                        _ => None,
                    })
                    .unwrap_or(last);
                let landmark_phrases: Vec<NounPhrase> = found
                    .role("landmark")
                    .into_iter()
                    .filter_map(phrase)
                    .collect();
                let points_back = landmark_phrases.len() == 1
                    && landmark_phrases[0].class.is_none()
                    && landmark_phrases[0].deictic.is_some_and(|word| word.pronoun);
                // "In the microwave, not on it", "next to the laptop, not in front of it": the denial is
                // stated of the same landmark. "On the cabinet, not next to it" denies what the first
                // relation may well include (a thing on another is also by it), so it is left to that
                // relation.
                if points_back
                    && negated
                    && relation == Relation::NextTo
                    && last != Relation::NextTo
                {
                    return;
                }
                let landmarks: Vec<Referent> = if points_back {
                    last_landmarks
                } else {
                    landmark_phrases
                        .iter()
                        .map(|landmark| self.plain_referent(landmark))
                        .collect()
                };
                let wanted = if relation == Relation::Between { 2 } else { 1 };
                if landmarks.len() != wanted {
                    return;
                }
                self.last_relation = Some((subject.clone(), relation, landmarks.clone()));
                let others = match &self.coordinated {
                    Some((key, others)) if *key == subject.span => others.clone(),
                    _ => Vec::new(),
                };
                for other in others {
                    self.push_relation(
                        other,
                        relation,
                        negated,
                        landmarks.clone(),
                        span,
                        misspelled,
                    );
                }
                self.push_relation(subject, relation, negated, landmarks, span, misspelled);
            }
            Action::RelationSame => {
                // "The dog is on the rug, and so is the cat": the last relation, of a new subject; never
                // after a denied one.
                let last_denied = self.constraints.iter().rev().find_map(|c| match &c.kind {
                    ConstraintKind::Relation { negated, .. } => Some(*negated),
                    _ => None,
                });
                // "And the bowl is too", the last word heard as "two": only after a singular subject.
                let number = found
                    .role("number")
                    .first()
                    .map(|&index| &chunks[index].kind);
                if let Some(kind) = number {
                    let too = matches!(
                        kind,
                        ChunkKind::Number {
                            quantity: Quantity::Exactly(2),
                            bare: true
                        }
                    );
                    if !too || first_phrase("subject").is_none_or(|subject| subject.plural) {
                        return;
                    }
                }
                // "The fridge is white and so is the stove": after colours or sizes, the same of the new
                // subject (the trailing run of attributes stated of one thing).
                let said = self.trailing_attributes();
                if !said.is_empty() {
                    if let Some(subject) = first_phrase("subject") {
                        self.count_of_subject(&subject, span, misspelled);
                        let target = self.referent(&subject);
                        self.push_attributes(&target, said, span, misspelled);
                    }
                    return;
                }
                let (Some(subject), Some((_, relation, landmarks)), Some(false)) = (
                    first_phrase("subject"),
                    self.last_relation.clone(),
                    last_denied,
                ) else {
                    return;
                };
                self.count_of_subject(&subject, span, misspelled);
                let subject = self.referent(&subject);
                self.last_relation = Some((subject.clone(), relation, landmarks.clone()));
                self.push_relation(subject, relation, false, landmarks, span, misspelled);
            }
            Action::Unread => {}
            Action::Sides => {
                // "L: mug, R: lamp": the first thing is left of the second, "R: lamp, L: mug" the same
                // from the other end; two sides alike state nothing.
                let sides: Vec<Side> = found
                    .role("side")
                    .into_iter()
                    .filter_map(|index| match chunks[index].kind {
                        ChunkKind::Side(side) => Some(side),
                        _ => None,
                    })
                    .collect();
                let relation = match sides.as_slice() {
                    [Side::Left, Side::Right] => Relation::LeftOf,
                    [Side::Right, Side::Left] => Relation::RightOf,
                    _ => return,
                };
                let (Some(subject), Some(landmark)) =
                    (first_phrase("subject"), first_phrase("landmark"))
                else {
                    return;
                };
                if subject.class.is_none() || landmark.class.is_none() {
                    return;
                }
                self.count_of_subject(&subject, span, misspelled);
                let subject = self.referent(&subject);
                let landmarks = vec![self.plain_referent(&landmark)];
                self.last_relation = Some((subject.clone(), relation, landmarks.clone()));
                self.push_relation(subject, relation, false, landmarks, span, misspelled);
            }
            Action::Place => {
                let Some(subject) = first_phrase("subject") else {
                    return;
                };
                let place = if let Some(&index) = found.role("room").first() {
                    match chunks[index].kind {
                        ChunkKind::Room(room) => Some(Place::Room(room)),
                        _ => None,
                    }
                } else if let Some(&index) = found.role("region").first() {
                    match chunks[index].kind {
                        ChunkKind::Region(region) => Some(Place::Region(region)),
                        // "bag: L": a side word alone after a noted thing is its side of the picture.
                        ChunkKind::Side(Side::Left) => Some(Place::Region(ImageRegion::Left)),
                        ChunkKind::Side(Side::Right) => Some(Place::Region(ImageRegion::Right)),
                        _ => None,
                    }
                } else {
                    None
                };
                let Some(place) = place else { return };
                // "There's a cat in the bathroom": the thing is there too.
                if found.rule.name == "place_there" {
                    self.exist(&subject, false, span, misspelled);
                    // "There's no cat in the bathroom": no cat, and no place for one.
                    if matches!(
                        subject.quantity,
                        Some(Quantity::None | Quantity::Exactly(0))
                    ) {
                        return;
                    }
                } else {
                    self.count_of_subject(&subject, span, misspelled);
                }
                let subject = self.referent(&subject);
                self.push(ConstraintKind::Place { subject, place }, span, misspelled);
            }
            Action::Have => {
                let Some(np) = first_phrase("np") else {
                    return;
                };
                // "The shelf is above the desk and holds six books": with no owner of its own, the last
                // relation's subject.
                let owner = if found.role("owner").is_empty() {
                    let Some(subject) = self.last_subject_phrase() else {
                        return;
                    };
                    Some(subject)
                } else {
                    first_phrase("owner")
                };
                let holds = !found.role("holds").is_empty();
                self.have(owner.as_ref(), &np, negated, holds, span, misspelled);
            }
            Action::Count => {
                let number =
                    found
                        .role("number")
                        .first()
                        .and_then(|&index| match chunks[index].kind {
                            ChunkKind::Number { quantity, bare } => Some((quantity, bare)),
                            _ => None,
                        });
                if let Some((quantity, bare)) = number {
                    // "Not five plants but three": the denied count names the class, not the number.
                    let np = first_phrase("np").or_else(|| {
                        first_phrase("denied").map(|mut phrase| {
                            phrase.quantity = None;
                            phrase
                        })
                    });
                    let quantity = if negated { Quantity::None } else { quantity };
                    self.count(np.as_ref(), quantity, bare, span, misspelled);
                    // "Bottles in fridge: 5": the counted things' place is stated too.
                    if let Some(np) = np.filter(|np| {
                        np.class.is_some() && !np.relations.is_empty() && quantity != Quantity::None
                    }) {
                        self.counted_relations(&np, quantity, span, misspelled);
                    }
                }
            }
            Action::Attribute => {
                let Some(subject) = first_phrase("subject") else {
                    return;
                };
                // With no attribute words after it, the subject's own ("green bottle" in a note).
                let (attributes, subject) = match found.role("attributes").first() {
                    Some(&index) => match &chunks[index].kind {
                        ChunkKind::Attributes(list) => (list.clone(), subject),
                        _ => (Vec::new(), subject),
                    },
                    None => {
                        let mut bare = subject;
                        (std::mem::take(&mut bare.attributes), bare)
                    }
                };
                self.count_of_subject(&subject, span, misspelled);
                let target = self.referent(&subject);
                self.push_attributes(&target, attributes, span, misspelled);
            }
        }
    }
}

/// The number a further place follows in a note ("plates: 4, in sink", "mugs: 3 on desk"): its index.
fn number_before(chunks: &[Chunk], position: usize) -> Option<usize> {
    let is_number = |at: usize| matches!(chunks[at].kind, ChunkKind::Number { .. });
    if position >= 2 && chunks[position - 1].kind == ChunkKind::Separator && is_number(position - 2)
    {
        return Some(position - 2);
    }
    (position >= 1 && is_number(position - 1)).then(|| position - 1)
}
