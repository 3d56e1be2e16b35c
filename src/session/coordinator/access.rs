//! Who may act on what, and the paged lists of scenes and conversations.
//!
//! Owns: `Caller` (an operator's name and role), the ownership rule (an operator reads and acts on the
//! conversations they opened; a supervisor on every one; scenes are shared), and paging by id.
//! Must not: authenticate anyone (the service's guard does, and hands a `Caller` over) or change any
//! conversation; it only answers yes or no and lists.

use crate::correction_log::{ConversationKey, SceneKey};

use serde::{Deserialize, Serialize};

use super::{lock, Coordinator};
use crate::error::{ErrorKind, SessionError};
use crate::wire::{ConversationListed, ConversationPage, SceneListed, ScenePage};

/// The most items one page of a list holds.
pub const PAGE_LIMIT_MAX: u32 = 200;
/// The items a page holds when the caller does not say.
pub const PAGE_LIMIT_DEFAULT: u32 = 50;

/// What an operator may act on.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Role {
    /// Reads and acts on the conversations they opened (scenes are shared).
    #[default]
    Operator,
    /// Reads and acts on every operator's conversations, e.g. to confirm a held change.
    Supervisor,
}

/// The operator a request acts for.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Caller {
    pub name: String,
    pub role: Role,
}

impl Caller {
    /// An operator with the plain role.
    pub fn operator(name: &str) -> Caller {
        Caller {
            name: name.to_string(),
            role: Role::Operator,
        }
    }

    /// Whether this caller may read and act on a conversation opened by `owner`.
    pub fn may_act_for(&self, owner: &str) -> bool {
        self.role == Role::Supervisor || self.name == owner
    }
}

/// Where a page starts and how long it is, checked.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct PageRequest {
    /// Items with ids above this one; 0 starts at the beginning.
    pub after: i64,
    pub limit: u32,
}

impl PageRequest {
    /// Checks the query values of a list route.
    pub fn new(after: Option<i64>, limit: Option<u32>) -> Result<PageRequest, SessionError> {
        let after = after.unwrap_or(0);
        if after < 0 {
            return Err(SessionError::malformed(
                "bad_page",
                "after is an id from an earlier page (0 or more)",
            ));
        }
        let limit = limit.unwrap_or(PAGE_LIMIT_DEFAULT);
        if !(1..=PAGE_LIMIT_MAX).contains(&limit) {
            return Err(SessionError::malformed(
                "bad_page",
                format!("limit is between 1 and {PAGE_LIMIT_MAX}; got {limit}"),
            ));
        }
        Ok(PageRequest { after, limit })
    }

    /// The keys of one page from ascending `keys`, and the cursor of the next page if there is one.
    fn cut(&self, keys: impl Iterator<Item = i64>) -> (Vec<i64>, Option<i64>) {
        let mut page: Vec<i64> = keys
            .filter(|key| *key > self.after)
            .take(self.limit as usize + 1)
            .collect();
        let more = page.len() > self.limit as usize;
        page.truncate(self.limit as usize);
        let next = if more { page.last().copied() } else { None };
        (page, next)
    }
}

impl Coordinator {
    /// Refuses (403 `not_your_conversation`) a caller who may not act on `conversation`; 404 when there is
    /// no such conversation. Call at the entry of every conversation route, before the work.
    ///
    /// 403 rather than 404 for another operator's conversation: ids are sequential and the health route
    /// reports how many conversations there are, so a 404 would hide nothing, while a 403 tells an
    /// operator who mistyped an id what is wrong. The answer never names the owner.
    pub fn check_access(
        &self,
        conversation: ConversationKey,
        caller: &Caller,
    ) -> Result<(), SessionError> {
        let slot = self.conversation_slot(conversation)?;
        let owner = lock(&slot).operator.clone();
        if caller.may_act_for(&owner) {
            Ok(())
        } else {
            Err(SessionError::new(
                ErrorKind::NotYours,
                "not_your_conversation",
                format!(
                    "conversation {} was opened by another operator; only they or a supervisor may \
                     read it or act on it",
                    conversation.0
                ),
            ))
        }
    }

    /// One page of the registered scenes, by ascending id.
    pub fn scenes_page(&self, page: PageRequest) -> ScenePage {
        let keys = self.scene_ids();
        let (ids, next_after) = page.cut(keys.iter().map(|key| key.0));
        let scenes = ids
            .into_iter()
            .filter_map(|id| {
                let slot = self.scene_slot(SceneKey(id)).ok()?;
                let slot = lock(&slot);
                Some(SceneListed {
                    scene_id: id,
                    name: slot.name.clone(),
                    version: slot.head.0,
                    width: slot.input.image.width,
                    height: slot.input.image.height,
                })
            })
            .collect();
        ScenePage { scenes, next_after }
    }

    /// One page of the conversations `caller` may read (their own; every one for a supervisor), by id.
    pub fn conversations_page(&self, caller: &Caller, page: PageRequest) -> ConversationPage {
        // Lazily: on a shared log each conversation looked at is read from it, so stop once the page is full.
        let visible: Vec<ConversationListed> = self
            .conversation_ids()
            .into_iter()
            .filter(|key| key.0 > page.after)
            .filter_map(|key| {
                let slot = self.conversation_slot(key).ok()?;
                let slot = lock(&slot);
                caller
                    .may_act_for(&slot.operator)
                    .then(|| ConversationListed {
                        conversation_id: slot.key.0,
                        scene_id: slot.scene.0,
                        operator: slot.operator.clone(),
                        opened_at: slot.opened_at.clone(),
                        pending: slot.pending.is_some(),
                    })
            })
            .take(page.limit as usize + 1)
            .collect();
        let (ids, next_after) = page.cut(visible.iter().map(|item| item.conversation_id));
        let conversations = visible
            .into_iter()
            .filter(|item| ids.contains(&item.conversation_id))
            .collect();
        ConversationPage {
            conversations,
            next_after,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pages_cut_after_the_cursor_and_point_at_the_next() {
        let page = PageRequest::new(Some(2), Some(2)).unwrap();
        assert_eq!(page.cut([1, 2, 3, 4, 5].into_iter()), (vec![3, 4], Some(4)));
        assert_eq!(page.cut([1, 2, 3, 4].into_iter()), (vec![3, 4], None));
        assert_eq!(page.cut([1, 2].into_iter()), (vec![], None));
        assert!(PageRequest::new(Some(-1), None).is_err());
        assert!(PageRequest::new(None, Some(0)).is_err());
        assert!(PageRequest::new(None, Some(PAGE_LIMIT_MAX + 1)).is_err());
        assert_eq!(
            PageRequest::new(None, None).unwrap(),
            PageRequest {
                after: 0,
                limit: PAGE_LIMIT_DEFAULT
            }
        );
    }

    #[test]
    fn a_supervisor_acts_for_anyone_an_operator_for_themselves() {
        let mira = Caller::operator("mira");
        assert!(mira.may_act_for("mira"));
        assert!(!mira.may_act_for("ola"));
        let noor = Caller {
            name: "noor".into(),
            role: Role::Supervisor,
        };
        assert!(noor.may_act_for("ola"));
    }
}
