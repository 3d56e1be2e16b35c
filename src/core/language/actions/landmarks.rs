//! Pronoun landmarks: which thing a later "it" after a relation word means ("the sink is below the window and
//! the towel is next to it", "the cat isn't on the bed, it's under it").
//!
//! Owns: `Builder::landmark_referent` and the preference for the last clause's subject; the unit tests of
//! pronoun landmarks and of counted and coordinated things' places.
//! Must not: match rules or bind deictic words to the conversation; `actions` and `existence` call these.

use super::*;

impl Builder<'_> {
    /// A landmark's referent; a pronoun landmark ("the bottle is in the fridge, and the bowl is on top of
    /// it", "the cat isn't on the bed, it's under it") is the latest thing the utterance named that is not
    /// the clause's own subject, or the previous referent when there is none.
    pub(super) fn landmark_referent(
        &mut self,
        landmark: &NounPhrase,
        subject: &NounPhrase,
        relation: Relation,
    ) -> Referent {
        let pronoun = landmark.class.is_none() && landmark.deictic.is_some_and(|word| word.pronoun);
        let subject_is_pronoun =
            subject.class.is_none() && subject.deictic.is_some_and(|word| word.pronoun);
        let last_subject = self
            .last_relation
            .as_ref()
            .map(|(subject, ..)| subject.clone());
        if pronoun {
            if let Some(found) = self.last_subject_as_landmark(landmark, subject, relation) {
                return Referent {
                    span: landmark.span,
                    ..found
                };
            }
            let found = self.named.iter().rev().find(|named| {
                let is_subject = if subject_is_pronoun {
                    // "It's under it": the first "it" is what the last relation was about.
                    last_subject.as_ref().is_some_and(|last| {
                        last.class == named.class && last.deixis == named.deixis
                    })
                } else {
                    named.class == subject.class
                        && named.deixis.is_none()
                        && subject.deictic.is_none()
                };
                // "More than two people on the sofa and a dog next to it": a singular "it" is no plural.
                let disagrees = named.plural && landmark.deictic.is_some_and(|word| !word.plural);
                !is_subject && !disagrees
            });
            if let Some(found) = found {
                return Referent {
                    span: landmark.span,
                    ..found.clone()
                };
            }
        }
        self.plain_referent(landmark)
    }

    /// "The sink is below the window and the towel is next to it", "telly on wall, shelf below it": a
    /// singular "it" as the landmark of a new subject means the last clause's subject, the thing that clause
    /// was about (the subject-first preference of centering theory, Grosz, Joshi and Weinstein 1995), when
    /// that thing can stand in the relation: not a person or a pet, not plural, not the new subject's own
    /// class, not one of several subjects; "on" it only when it is furniture or an appliance (a bowl is not put on a bottle: "the bottle
    /// is in the fridge and the bowl is on top of it" is on the fridge), "inside" it not when it is part of
    /// the building (a door, a wall). Otherwise the latest thing named, as before.
    fn last_subject_as_landmark(
        &self,
        landmark: &NounPhrase,
        subject: &NounPhrase,
        relation: Relation,
    ) -> Option<Referent> {
        if landmark.deictic.is_some_and(|word| word.plural)
            || subject.class.is_none()
            || subject.deictic.is_some()
        {
            return None;
        }
        let (last, ..) = self.last_relation.as_ref()?;
        // "The bowl and the mug are in the sink, and the plate is next to it": several subjects are no "it".
        if self
            .coordinated
            .as_ref()
            .is_some_and(|(key, _)| *key == last.span)
        {
            return None;
        }
        let class = last.class?;
        if last.deixis.is_some() || last.plural || Some(class) == subject.class {
            return None;
        }
        let group = self.taxonomy.class(class)?.group;
        let fits = match relation {
            // "There's a blanket on the sofa, and the cat is lying on it": a person or a pet lies on a
            // thing as well as on furniture.
            Relation::On => {
                matches!(group, ClassGroup::Furniture | ClassGroup::Appliance)
                    || (group == ClassGroup::Object
                        && subject.class.is_some_and(|class| {
                            self.taxonomy
                                .class(class)
                                .is_some_and(|info| info.group == ClassGroup::Living)
                        }))
            }
            Relation::Inside => !matches!(group, ClassGroup::Structure | ClassGroup::Living),
            _ => group != ClassGroup::Living,
        };
        fits.then(|| Referent {
            relations: Vec::new(),
            region: None,
            ..last.clone()
        })
    }
}

#[cfg(test)]
mod tests {
    use crate::language::notation::notation_list;
    use crate::language::Grammar;

    fn read(text: &str) -> Vec<String> {
        let grammar = Grammar::embedded().expect("embedded grammar");
        let parse = grammar.parse(text, None).expect("parse");
        notation_list(&parse.constraints, grammar.taxonomy())
    }

    #[test]
    fn a_pronoun_landmark_prefers_the_last_subject_when_it_can_hold_the_relation() {
        let said = read("the sink is below the window and the towel is next to it");
        assert!(
            said.contains(&"rel(towel, next_to, sink)".to_string()),
            "{said:?}"
        );
        let said = read("the rucksack is on the door and the laptop is inside it");
        assert!(
            said.contains(&"rel(laptop, inside, bag)".to_string()),
            "{said:?}"
        );
    }

    #[test]
    fn a_pronoun_landmark_falls_back_to_the_latest_thing_that_fits() {
        // A bowl is not put on a bottle, a dog is not under a cat, a singular "it" is no plural.
        let said = read("the bottle is in the fridge and the bowl is on top of it");
        assert!(
            said.contains(&"rel(bowl, on, fridge)".to_string()),
            "{said:?}"
        );
        let said = read("the cat is on the sofa and the dog is under it");
        assert!(
            said.contains(&"rel(dog, under, sofa)".to_string()),
            "{said:?}"
        );
        let said = read("there are three people on the sofa and a dog next to it");
        assert!(
            said.contains(&"rel(dog, next_to, sofa)".to_string()),
            "{said:?}"
        );
        let said = read("the bowl and the mug are in the sink and the plate is next to it");
        assert!(
            said.contains(&"rel(plate, next_to, sink)".to_string()),
            "{said:?}"
        );
    }

    #[test]
    fn counted_and_coordinated_things_keep_their_places() {
        assert_eq!(
            read("bottles in fridge: 5"),
            ["count(bottle, =5)", "rel(bottle*, inside, fridge)"]
        );
        assert_eq!(
            read("plates: 4, in sink"),
            ["count(plate, =4)", "rel(plate*, inside, sink)"]
        );
        assert_eq!(
            read("laptop x2 on desk"),
            ["count(laptop, =2)", "rel(laptop*, on, desk)"]
        );
        let mut said = read("the bowl and the plate are in the sink, not on the counter");
        said.sort();
        assert_eq!(
            said,
            [
                "rel(bowl, !on, counter)",
                "rel(bowl, inside, sink)",
                "rel(plate, !on, counter)",
                "rel(plate, inside, sink)"
            ]
        );
        let mut said = read("I can see at least five books on the floor by the bed");
        said.sort();
        assert_eq!(
            said,
            [
                "count(book, >=5)",
                "rel(book*, next_to, bed)",
                "rel(book*, on, floor)"
            ]
        );
    }
}
