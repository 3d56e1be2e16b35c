//! Who may act on what, and the paged lists of scenes and conversations.
//!
//! Owns: `Caller` (an operator's name and role), the ownership rule (an operator reads and acts on the
//! conversations they opened; a supervisor on every one; scenes are shared), and paging by id.
//! Must not: authenticate anyone (the service's guard does, and hands a `Caller` over) or change any
//! conversation; it only answers yes or no and lists.

use crate::correction_log::ConversationKey;

use serde::{Deserialize, Serialize};

use super::{lock, log_error, Coordinator};
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

    /// One page of the registered scenes, by ascending id, read from the log's scene rows and the first
    /// bytes of each image (its size); no scene is decoded or held for a listing.
    pub fn scenes_page(&self, page: PageRequest) -> Result<ScenePage, SessionError> {
        let rows = lock(&self.log)
            .scene_listing(page.after, i64::from(page.limit) + 1)
            .map_err(log_error)?;
        let (ids, next_after) = page.cut(rows.iter().map(|row| row.key.0));
        let scenes = rows
            .into_iter()
            .filter(|row| ids.contains(&row.key.0))
            .map(|row| {
                let (width, height) = png_size(&row.image_head).ok_or_else(|| {
                    SessionError::internal(format!(
                        "stored scene {}'s image does not start as a PNG",
                        row.key.0
                    ))
                })?;
                Ok(SceneListed {
                    scene_id: row.key.0,
                    name: row.name,
                    version: row.head.0,
                    width,
                    height,
                })
            })
            .collect::<Result<Vec<_>, SessionError>>()?;
        Ok(ScenePage { scenes, next_after })
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

/// A PNG's width and height from its first bytes (signature and IHDR chunk), or `None` if they are not a
/// PNG's.
fn png_size(head: &[u8]) -> Option<(u32, u32)> {
    const SIGNATURE: [u8; 8] = [0x89, b'P', b'N', b'G', 0x0d, 0x0a, 0x1a, 0x0a];
    if head.len() < 24 || head[..8] != SIGNATURE || &head[12..16] != b"IHDR" {
        return None;
    }
    let number =
        |at: usize| u32::from_be_bytes([head[at], head[at + 1], head[at + 2], head[at + 3]]);
    Some((number(16), number(20)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_pngs_size_is_read_from_its_first_bytes() {
        let picture = crate::raster::RgbImage {
            width: 7,
            height: 3,
            pixels: vec![[40, 90, 160]; 21],
        };
        let png = crate::raster::encode_rgb_png(&picture).unwrap();
        let head = &png[..crate::correction_log::IMAGE_HEAD_BYTES as usize];
        assert_eq!(png_size(head), Some((7, 3)));
        assert_eq!(png_size(&png[..20]), None, "too short");
        assert_eq!(png_size(b"GIF89a................................"), None);
    }

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
