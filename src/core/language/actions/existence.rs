//! Existence clauses and what hangs on them: "there is", "has", counts stated apart from their noun, the
//! relations and region attached to a thing said to exist, and the relations of a pointed thing in a note.
//!
//! Owns: `Builder`'s existence, "has" and "holds", count and attached-relation helpers, the attributes said
//! last ("and so is the stove"), whether a phrase names several things (`several`: never a relabel) and the
//! quantity-to-constraint table (`count_kind`).
//! Must not: match rules or bind deictic words to the conversation; `actions` calls these from its rules.

use super::*;

impl Builder<'_> {
    /// "The table has a mug on it", "the room has no cat": a relation to "it" is a relation to the owner,
    /// and to the whole view it is no relation at all.
    pub(super) fn have(
        &mut self,
        owner: Option<&NounPhrase>,
        np: &NounPhrase,
        negated: bool,
        holds: bool,
        span: Span,
        misspelled: bool,
    ) {
        let points_back = |attached: &AttachedRelation| {
            attached.landmarks.iter().all(|landmark| {
                landmark.class.is_none() && landmark.deictic.is_some_and(|word| word.pronoun)
            })
        };
        // "My sister has three cats": what a person or a pet owns says nothing of what is in view.
        let living = owner
            .and_then(|owner| owner.class)
            .and_then(|class| self.taxonomy.class(class))
            .is_some_and(|info| info.group == ClassGroup::Living);
        if living {
            return;
        }
        let mut np = np.clone();
        match owner {
            Some(owner) => {
                let mut landmark = owner.clone();
                landmark.quantity = None;
                // "The shelf holds five books", "the box contains toys": with no place of their own, the
                // things are on a piece of furniture and in anything else.
                let group = owner
                    .class
                    .and_then(|class| self.taxonomy.class(class))
                    .map(|info| info.group);
                let relation = match group {
                    Some(ClassGroup::Furniture) => Some(Relation::On),
                    Some(ClassGroup::Appliance | ClassGroup::Object) => Some(Relation::Inside),
                    _ => None,
                };
                if let (true, true, Some(relation)) = (holds, np.relations.is_empty(), relation) {
                    let mut placed = landmark.clone();
                    placed.relations = Vec::new();
                    placed.region = None;
                    np.relations.push(AttachedRelation {
                        relation,
                        landmarks: vec![placed],
                    });
                }
                self.owner = Some(landmark);
            }
            None => {
                self.owner = None;
                np.relations.retain(|attached| !points_back(attached));
            }
        }
        self.exist(&np, negated, span, misspelled);
    }

    /// The attributes the last constraints stated of one thing, in order ("the fridge is white and so is the
    /// stove": white).
    pub(super) fn trailing_attributes(&self) -> Vec<Attribute> {
        let mut said: Vec<Attribute> = Vec::new();
        let mut of: Option<&Referent> = None;
        for constraint in self.constraints.iter().rev() {
            match &constraint.kind {
                ConstraintKind::Attribute { target, attribute }
                    if of.is_none_or(|of| of == target) =>
                {
                    said.insert(0, *attribute);
                    of = Some(target);
                }
                _ => break,
            }
        }
        said
    }

    /// The last relation's subject as a noun phrase, when it names a class and nothing pointed at.
    pub(super) fn last_subject_phrase(&self) -> Option<NounPhrase> {
        let (subject, ..) = self.last_relation.as_ref()?;
        (subject.class.is_some() && subject.deixis.is_none()).then(|| NounPhrase {
            class: subject.class,
            deictic: None,
            plural: subject.plural,
            attributes: subject.attributes.clone(),
            quantity: None,
            relations: Vec::new(),
            region: None,
            article: false,
            span: subject.span,
        })
    }

    /// The relations attached to a demonstrative noun phrase, each stated of what it points at.
    pub(super) fn deictic_relations(&mut self, np: &NounPhrase, span: Span, misspelled: bool) {
        let mut subject = np.clone();
        let relations = std::mem::take(&mut subject.relations);
        subject.region = None;
        let referent = self.referent(&subject);
        for attached in relations {
            let wanted = if attached.relation == Relation::Between {
                2
            } else {
                1
            };
            // Only landmarks naming a class: "it in bits" places nothing.
            if attached.landmarks.len() != wanted
                || attached
                    .landmarks
                    .iter()
                    .any(|landmark| landmark.class.is_none())
            {
                continue;
            }
            let landmarks = attached
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
        if let Some(region) = np.region {
            self.push(
                ConstraintKind::Place {
                    subject: referent,
                    place: Place::Region(region),
                },
                span,
                misspelled,
            );
        }
    }

    /// Relations of `np` to a bare "it" go to the owner of the last "X has ..." of this utterance.
    pub(super) fn to_owner(&self, np: &NounPhrase) -> NounPhrase {
        let mut np = np.clone();
        if let Some(owner) = &self.owner {
            for attached in np.relations.iter_mut().filter(|attached| {
                attached.landmarks.iter().all(|landmark| {
                    landmark.class.is_none() && landmark.deictic.is_some_and(|word| word.pronoun)
                })
            }) {
                attached.landmarks = vec![owner.clone()];
            }
        }
        np
    }

    /// "Mugs: two", "the number of mugs is two", "there are exactly two" (of the class named last).
    pub(super) fn count(
        &mut self,
        np: Option<&NounPhrase>,
        quantity: Quantity,
        bare: bool,
        span: Span,
        misspelled: bool,
    ) {
        let Some(class) = np.and_then(|phrase| phrase.class).or(self.last_class) else {
            return;
        };
        // "No mug, any": a noun phrase whose own quantity disagrees with the number read after it is not
        // read surely, so it states nothing.
        if let Some(own) = np.and_then(|phrase| phrase.quantity) {
            if own != quantity {
                return;
            }
        }
        // "Add a mug, there's one in this room": a bare "one" with no noun is the pronoun, not a count.
        let quantity = if np.is_none() && bare && quantity == Quantity::Exactly(1) {
            Quantity::Some
        } else {
            quantity
        };
        if let Some(kind) = count_kind(class, quantity, false) {
            self.push(kind, span, misspelled);
        }
    }

    /// The relations attached to a noun phrase whose count was stated after it ("bottles in fridge: 5"),
    /// each stated of the things counted.
    pub(super) fn counted_relations(
        &mut self,
        np: &NounPhrase,
        quantity: Quantity,
        span: Span,
        misspelled: bool,
    ) {
        let mut subject = np.clone();
        subject.quantity = None;
        subject.region = None;
        subject.plural |= !matches!(quantity, Quantity::Exactly(1) | Quantity::AtMost(1));
        let relations = std::mem::take(&mut subject.relations);
        let referent = self.referent(&subject);
        self.state_relations(&referent, &subject, relations, span, misspelled);
    }

    /// Each relation attached to `subject` stated of `referent`, the last one kept for a later denial ("blanket
    /// on chair, NOT sofa").
    fn state_relations(
        &mut self,
        referent: &Referent,
        subject: &NounPhrase,
        relations: Vec<AttachedRelation>,
        span: Span,
        misspelled: bool,
    ) {
        for attached in relations {
            let landmarks: Vec<Referent> = attached
                .landmarks
                .iter()
                .map(|landmark| self.landmark_referent(landmark, subject, attached.relation))
                .collect();
            self.last_relation = Some((referent.clone(), attached.relation, landmarks.clone()));
            self.push_relation(
                referent.clone(),
                attached.relation,
                false,
                landmarks,
                span,
                misspelled,
            );
        }
    }

    /// "Both chairs are by the table": a stated number on a subject is also a count.
    pub(super) fn count_of_subject(&mut self, subject: &NounPhrase, span: Span, misspelled: bool) {
        if let (Some(class), Some(quantity)) = (subject.class, subject.quantity) {
            if let Some(kind) = count_kind(class, quantity, false) {
                if !matches!(kind, ConstraintKind::Present { .. }) {
                    self.push(kind, span, misspelled);
                }
            }
        }
    }

    /// "There are two chairs next to the table", "no cats", "there's a mug on the counter" ("a mug on it":
    /// the thing the utterance named before).
    pub(super) fn exist(&mut self, np: &NounPhrase, negated: bool, span: Span, misspelled: bool) {
        let mut owned = self.to_owner(np);
        // "How did you miss the mug? It's right there.": with nothing pointed at, "it" means the noun phrase
        // the utterance named and no rule used.
        if let (Some(word), None, None, false, Some(antecedent)) = (
            owned.deictic,
            owned.class,
            owned.quantity,
            self.has_focus,
            &self.unused_antecedent,
        ) {
            if word.pronoun && !word.plural {
                let span = owned.span;
                owned = antecedent.clone();
                owned.quantity = None;
                owned.span = span;
            }
        }
        let np = &owned;
        // "It's one object", "there are three of them": a stated number with no class counts the class the
        // utterance named last.
        let counted = matches!(
            np.quantity,
            Some(Quantity::Exactly(_) | Quantity::AtLeast(_) | Quantity::AtMost(_))
        );
        let elliptical;
        let np = if np.class.is_none() && counted && self.last_class.is_some() {
            let mut filled = np.clone();
            filled.class = self.last_class;
            filled.deictic = None;
            elliptical = filled;
            &elliptical
        } else {
            np
        };
        // "That mug does not exist", "this lamp isn't there": a demonstrative naming a class, denied, is the
        // class denied as "the mug does not exist" is. Said of a demonstrative alone, or stated, it is no
        // existence.
        let denied_named = negated
            && np.class.is_some()
            && np.quantity.is_none()
            && np.relations.is_empty()
            && np.deictic.is_some_and(|word| !word.pronoun);
        let undeixed;
        let np = if denied_named {
            let mut plain = np.clone();
            plain.deictic = None;
            undeixed = plain;
            &undeixed
        } else {
            np
        };
        if np.deictic.is_some() {
            return;
        }
        // "There aren't five plants": a denied number above one says the count is not that, never that none is
        // there ("not one mug" is none).
        if negated
            && matches!(
                np.quantity,
                Some(Quantity::Exactly(2..) | Quantity::AtLeast(_) | Quantity::AtMost(_))
            )
        {
            return;
        }
        let zero = negated
            || matches!(
                np.quantity,
                Some(Quantity::None) | Some(Quantity::Exactly(0))
            );
        let located = !np.relations.is_empty() || np.region.is_some();
        if zero && located {
            // "There are no cats on the bed": the relation is denied, not the class.
            let mut subject = np.clone();
            subject.quantity = None;
            let relations = std::mem::take(&mut subject.relations);
            subject.region = None;
            subject.span = np.span;
            let subject_referent = self.referent(&subject);
            for attached in relations {
                let landmarks = attached
                    .landmarks
                    .iter()
                    .map(|landmark| self.landmark_referent(landmark, &subject, attached.relation))
                    .collect();
                self.push_relation(
                    subject_referent.clone(),
                    attached.relation,
                    true,
                    landmarks,
                    span,
                    misspelled,
                );
            }
            return;
        }
        if np.class.is_some() && !zero && np.deictic.is_none() {
            self.introduced = Some(np.clone());
        }
        if let Some(class) = np.class {
            let quantity = if zero {
                Quantity::None
            } else {
                np.quantity.unwrap_or(Quantity::Some)
            };
            if let Some(kind) = count_kind(class, quantity, negated) {
                self.push(kind, span, misspelled);
            }
        }
        if !located {
            // "There's a big box": the attributes are stated of the thing said to exist.
            if !zero && !np.attributes.is_empty() {
                let mut target = np.clone();
                target.quantity = None;
                let attributes = std::mem::take(&mut target.attributes);
                let target = self.referent(&target);
                self.push_attributes(&target, attributes, span, misspelled);
            }
            self.seen_referent = true;
            return;
        }
        let mut subject = np.clone();
        subject.quantity = None;
        let relations = std::mem::take(&mut subject.relations);
        let region = subject.region.take();
        let subject_referent = self.referent(&subject);
        self.state_relations(&subject_referent, &subject, relations, span, misspelled);
        if let Some(region) = region {
            self.push(
                ConstraintKind::Place {
                    subject: subject_referent,
                    place: Place::Region(region),
                },
                span,
                misspelled,
            );
        }
    }
}

/// The existence constraint a quantity states about a class.
pub(super) fn count_kind(
    class: ClassId,
    quantity: Quantity,
    _negated: bool,
) -> Option<ConstraintKind> {
    Some(match quantity {
        Quantity::None | Quantity::Exactly(0) | Quantity::AtMost(0) => {
            ConstraintKind::Absent { class }
        }
        // "At least one dog" is said as a count and kept one; "some", "any" say only that it is there.
        Quantity::Some | Quantity::AtLeast(0) => ConstraintKind::Present { class },
        Quantity::Exactly(n) => ConstraintKind::Count {
            class,
            count: Count::Exactly(n),
        },
        Quantity::AtLeast(n) => ConstraintKind::Count {
            class,
            count: Count::AtLeast(n),
        },
        Quantity::AtMost(n) => ConstraintKind::Count {
            class,
            count: Count::AtMost(n),
        },
    })
}

/// Whether a noun phrase names a number of things ("four chairs", "at least two"): a count, never the identity
/// of one thing.
pub(super) fn several(phrase: Option<&NounPhrase>) -> bool {
    phrase.is_some_and(|phrase| {
        matches!(
            phrase.quantity,
            Some(Quantity::Exactly(2..) | Quantity::AtLeast(_) | Quantity::AtMost(_))
        )
    })
}
