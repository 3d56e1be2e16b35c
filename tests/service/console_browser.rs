//! The operator console in a real browser (headless Chromium through chromedriver): with a token set, the
//! page asks for it; it loads a demo scene, relabels an object the operator points at, answers a question
//! by clicking a candidate on the picture after a reload brought the question back, goes on with the
//! conversation from the list of stored conversations with a safety change held, confirms it, takes it back
//! and puts it back with the keyboard, points with the keyboard alone, reaches every control with Tab,
//! browses the scene's versions (each one's label map checked against the API's) and compares two in the
//! split view with a dragged divider, and sends a photo with its depth from the chooser; every step changes
//! the picture and the lists. Screenshots, at a laptop's 1366x768 and a tablet's 820x1180 too, go to
//! `$CARGO_TARGET_TMPDIR/console/`.
//!
//! Needs Debian's `chromium` and `chromium-driver` (`.ci/run` installs them); without them it fails and
//! says so. The scene is the committed demo scene `dining_room_guests` on the real pipeline.

use crate::service_support;
use crate::{console_support as support, webdriver};

use std::net::SocketAddr;
use std::path::PathBuf;

use serde_json::Value;
use service_support::get;
use support::*;
use webdriver::Browser;

/// What every step works with: the browser, the service's address, where screenshots go.
struct Walk {
    browser: Browser,
    address: SocketAddr,
    shots: PathBuf,
}

/// What the first steps saw, for later steps to compare with.
struct Seen {
    graph: Value,
    objects: Vec<Value>,
    original: String,
    renamed: String,
}

#[test]
fn an_operator_corrects_a_scene_in_the_console() {
    let data = tempfile::tempdir().unwrap();
    let service = start_service(data.path());
    let shots = std::path::PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("console");
    std::fs::create_dir_all(&shots).unwrap();
    let walk = Walk {
        browser: Browser::start(1280, 900),
        address: service.address,
        shots,
    };
    let seen = sign_in_open_and_rename(&walk);
    ask_reload_and_answer(&walk, &seen);
    let (held, people_before) = hold_and_go_on_from_the_lists(&walk);
    let confirmed = confirm_take_back_put_back(&walk, &held, people_before);
    versions_and_split(&walk, &seen, &held, &confirmed);
    keyboard_alone(&walk, &seen);
    send_a_photo(&walk);
}

/// Signs in, meets an unknown conversation in the address, opens a demo scene, points at an object and
/// renames it.
fn sign_in_open_and_rename(walk: &Walk) -> Seen {
    let browser = &walk.browser;
    let address = walk.address;
    let shots = &walk.shots;
    // The console's files are served without a token; the page asks for one because the API wants it.
    let page = get(address, "/console", None);
    assert_eq!(page.status, 200);
    assert_eq!(
        page.header("content-type"),
        Some("text/html; charset=utf-8")
    );
    browser.goto(&format!("http://{}/console", address));
    browser.wait_for("document.getElementById('token-dialog').open", TURN);
    browser.screenshot(&shots.join("01-token.png"));
    browser.type_into("#token-input", TOKEN);
    browser.click("#token-send");
    browser.wait_for("document.body.dataset.ready === 'yes'", TURN);
    browser.wait_for("document.body.dataset.listsLoaded === 'yes'", TURN);
    assert_eq!(
        texts(browser, "#scene-list li"),
        vec!["No scene stored yet: load a demo room or send a photo."]
    );
    assert_eq!(
        browser
            .script("return document.getElementById('workspace').getBoundingClientRect().height;"),
        0,
        "no workspace before a scene is open"
    );
    // An address naming a conversation that is not there: the lists, and why.
    browser.goto("about:blank");
    browser.goto(&format!("http://{}/console#conversation=99", address));
    let why = browser.wait_for(
        "document.body.dataset.listsLoaded === 'yes' && document.getElementById('chooser-problem').textContent",
        TURN,
    );
    assert!(
        why.as_str().unwrap().contains("unknown_conversation"),
        "{why}"
    );
    assert_eq!(browser.script("return location.hash;"), "");

    // A demo scene by name: the picture, its frames, legend and object list appear.
    browser.type_into("#demo-name", &format!("dining_room_guests{ENTER}"));
    browser.wait_for("document.body.dataset.conversation", TURN);
    let scene_id: i64 = 1;
    let graph = get(address, &format!("/v1/scenes/{scene_id}"), Some(TOKEN)).json();
    let objects = graph["objects"].as_array().unwrap().clone();
    assert_eq!(listed_objects(browser).len(), objects.len());
    assert_eq!(
        browser.script("return document.querySelectorAll('#frame-layer rect.frame').length;"),
        objects.len()
    );
    assert!(!texts(browser, "#legend li").is_empty());
    let original = digest(browser);
    browser.screenshot(&shots.join("02-scene.png"));

    // Point at an object and rename it.
    let labels = label_map(address, &format!("/v1/scenes/{scene_id}/labels.png"));
    assert_eq!(
        original,
        fingerprint(&labels),
        "the page shows the API's label map"
    );
    let target = objects
        .iter()
        .filter(|object| object["safety"] == false)
        .filter(|object| {
            !["wall", "floor", "ceiling", "chair", "towel"]
                .contains(&object["class"].as_str().unwrap())
        })
        .max_by_key(|object| object["area_pixels"].as_u64().unwrap())
        .expect("an object to rename");
    let target_id = target["object_id"].as_u64().unwrap();
    let (x, y) = pixel_of(target, &labels);
    let shown_width = browser
        .script("return document.getElementById('base-layer').getBoundingClientRect().width;")
        .as_f64()
        .unwrap();
    let scale = shown_width / graph["width"].as_f64().unwrap();
    browser.click_at(
        "#base-layer",
        (f64::from(x) + 0.5) * scale,
        (f64::from(y) + 0.5) * scale,
    );
    let pointing = browser.wait_for(
        "document.getElementById('pointer-line').textContent.includes('Pointing at')",
        TURN,
    );
    assert!(pointing.as_bool().unwrap());
    let status = send_note(browser, "that's a towel");
    browser.screenshot(&shots.join("03-pointed-and-renamed.png"));
    assert_eq!(
        status,
        "applied",
        "moved: {:?}",
        texts(browser, "#moved li")
    );
    assert!(
        texts(browser, "#moved li")
            .iter()
            .any(|line| line.contains("towel")),
        "{:?}",
        texts(browser, "#moved li")
    );
    assert!(listed_objects(browser)
        .iter()
        .any(|(_, class)| class == "towel"));
    assert!(!listed_objects(browser)
        .iter()
        .any(|(id, class)| *id == target_id && class == target["class"].as_str().unwrap()));
    let renamed = digest(browser);
    assert_ne!(renamed, original, "the picture's labels changed");
    let turn = browser.script("return document.querySelector('#history li').textContent;");
    assert!(turn.as_str().unwrap().contains("pointing at"), "{turn}");
    Seen {
        graph,
        objects,
        original,
        renamed,
    }
}

/// Asks a question, reloads the page (the question comes back), and answers it by clicking a candidate.
fn ask_reload_and_answer(walk: &Walk, seen: &Seen) {
    let browser = &walk.browser;
    let address = walk.address;
    let shots = &walk.shots;
    let renamed = seen.renamed.clone();
    // A question: its candidates are framed on the picture; clicking one answers it.
    let status = send_note(browser, "the chair is a sofa");
    assert_eq!(status, "needs_clarification");
    let candidates = browser.script("return [...document.querySelectorAll('#frame-layer g.candidate')].map(g => Number(g.dataset.candidate));");
    let candidates = candidates.as_array().unwrap();
    assert!(candidates.len() >= 2, "{candidates:?}");
    assert_eq!(texts(browser, "#candidates li").len(), candidates.len());
    browser.screenshot(&shots.join("04-question.png"));

    // A reload goes on with the conversation: the question, its framed candidates and the notes come back.
    browser.goto("about:blank");
    browser.goto(&format!("http://{address}/console#conversation=1"));
    browser.wait_for(
        "document.body.dataset.conversation === '1' && !document.getElementById('question').hidden && !document.body.classList.contains('busy')",
        TURN,
    );
    let restored = browser.script("return [...document.querySelectorAll('#frame-layer g.candidate')].map(g => Number(g.dataset.candidate));");
    assert_eq!(restored.as_array().unwrap(), candidates);
    assert_eq!(texts(browser, "#history li").len(), 2);
    assert_eq!(digest(browser), renamed);
    browser.screenshot(&shots.join("04b-question-after-reload.png"));
    let pick = candidates[0].as_u64().unwrap();
    browser.click(&format!(
        "#frame-layer g.candidate[data-candidate='{pick}'] rect"
    ));
    assert_eq!(wait_for_turns(browser, 3), "applied");
    browser.wait_for("document.getElementById('question').hidden", TURN);
    assert!(listed_objects(browser)
        .iter()
        .any(|(_, class)| class == "sofa"));
    assert!(!listed_objects(browser).contains(&(pick, "chair".to_string())));
    let history = texts(browser, "#history li");
    assert!(
        history[0].contains(&format!("object {pick}")),
        "{history:?}"
    );
    assert_eq!(
        browser.script("return document.querySelectorAll('#frame-layer g.candidate').length;"),
        0
    );
    browser.screenshot(&shots.join("05-answered.png"));
}

/// Holds a change to a person, looks at it on a laptop and a tablet, and goes on with the conversation
/// from the page's lists; gives the held picture's fingerprint and the people shown.
fn hold_and_go_on_from_the_lists(walk: &Walk) -> (String, usize) {
    let browser = &walk.browser;
    let address = walk.address;
    let shots = &walk.shots;
    // A safety hold stays on screen until answered, then applies.
    let people_before = listed_objects(browser)
        .iter()
        .filter(|(_, class)| class == "person")
        .count();
    assert!(people_before > 0);
    let status = send_note(browser, "there is no person");
    assert_eq!(status, "needs_confirmation");
    assert_eq!(
        browser.script("return document.getElementById('hold').hidden;"),
        false
    );
    let held = digest(browser);
    browser.screenshot(&shots.join("06-held.png"));
    // The README's picture: the held change beside the split view, on a laptop screen.
    browser.set_window(1366, 768);
    browser.click("#split");
    browser.script("window.scrollTo(0, 0);");
    assert_eq!(
        browser.script("return document.getElementById('stage').dataset.split;"),
        "50"
    );
    browser.screenshot(&shots.join("06a-held-split-laptop.png"));
    browser.click("#split");
    browser.set_window(1280, 900);
    let hold_at = "const hold = document.getElementById('hold').getBoundingClientRect(); \
                   const stage = document.getElementById('stage').getBoundingClientRect(); \
                   return [hold.top, stage.top, hold.height, window.innerHeight];";
    let laptop = browser.script(hold_at);
    assert!(
        laptop[0].as_f64().unwrap() + 40.0 < laptop[3].as_f64().unwrap(),
        "the held change shows on the first screen: {laptop}"
    );
    browser.set_window(820, 1180);
    browser.script("window.scrollTo(0, 0);");
    let tablet = browser.script(hold_at);
    assert!(
        tablet[0].as_f64().unwrap() < tablet[1].as_f64().unwrap()
            && tablet[2].as_f64().unwrap() > 0.0,
        "on a tablet the held change comes before the picture: {tablet}"
    );
    browser.screenshot(&shots.join("06b-held-tablet.png"));

    // Later, from the page's lists: the stored scene, and the conversation still waiting for a yes or no.
    browser.set_window(1366, 768);
    browser.goto("about:blank");
    browser.goto(&format!("http://{address}/console"));
    browser.wait_for("document.body.dataset.listsLoaded === 'yes'", TURN);
    let stored = texts(browser, "#scene-list li");
    assert_eq!(stored.len(), 1);
    assert!(stored[0].contains("dining_room_guests"), "{stored:?}");
    let waiting = texts(browser, "#conversation-list li");
    assert_eq!(waiting.len(), 1);
    assert!(
        waiting[0].contains("dining_room_guests")
            && waiting[0].contains("waiting for your yes or no"),
        "{waiting:?}"
    );
    browser.screenshot(&shots.join("06c-chooser-laptop.png"));
    browser.click("#conversation-list button[data-conversation='1']");
    browser.wait_for(
        "document.body.dataset.conversation === '1' && !document.getElementById('hold').hidden && !document.body.classList.contains('busy')",
        TURN,
    );
    assert_eq!(digest(browser), held);
    assert_eq!(texts(browser, "#history li").len(), 4);
    assert!(texts(browser, "#hold-changes li")
        .iter()
        .any(|line| line.contains("person")));
    browser.set_window(1280, 900);
    (held, people_before)
}

/// Confirms the held change, takes it back with the button and puts it back with Ctrl+Y; gives the
/// confirmed picture's fingerprint.
fn confirm_take_back_put_back(walk: &Walk, held: &str, people_before: usize) -> String {
    let browser = &walk.browser;
    let shots = &walk.shots;
    let held = held.to_string();
    browser.click("#confirm");
    assert_eq!(wait_for_turns(browser, 5), "confirmed");
    browser.wait_for("document.getElementById('hold').hidden", TURN);
    assert!(listed_objects(browser)
        .iter()
        .all(|(_, class)| class != "person"));
    let confirmed = digest(browser);
    assert_ne!(confirmed, held);
    assert!(
        browser
            .script("return Number(document.getElementById('stage').dataset.movedPixels);")
            .as_u64()
            .unwrap()
            > 0
    );
    browser.screenshot(&shots.join("07-confirmed.png"));

    // Take back with the button, put back with the keyboard.
    browser.click("#undo");
    assert_eq!(wait_for_turns(browser, 6), "undone");
    assert_eq!(
        digest(browser),
        held,
        "taking back restores the labels before the confirmation"
    );
    assert_eq!(
        listed_objects(browser)
            .iter()
            .filter(|(_, class)| class == "person")
            .count(),
        people_before
    );
    browser.screenshot(&shots.join("08-undone.png"));
    browser.control_key("y");
    assert_eq!(wait_for_turns(browser, 7), "redone");
    assert_eq!(digest(browser), confirmed);
    let turns = texts(browser, "#history li").len();
    assert_eq!(turns, 7, "{:?}", texts(browser, "#history li"));
    confirmed
}

/// Browses the scene's versions and compares two in the split view, at laptop and tablet sizes.
fn versions_and_split(walk: &Walk, seen: &Seen, held: &str, confirmed: &str) {
    let browser = &walk.browser;
    let address = walk.address;
    let shots = &walk.shots;
    let scene_id: i64 = 1;
    let (original, objects) = (seen.original.clone(), &seen.objects);
    let (held, confirmed) = (held.to_string(), confirmed.to_string());
    // The scene's versions: listed as the API lists them; each one viewed shows its own label map.
    let listed = get(
        address,
        &format!("/v1/scenes/{scene_id}/versions"),
        Some(TOKEN),
    )
    .json();
    let api_versions: Vec<i64> = listed["versions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|version| version["version"].as_i64().unwrap())
        .collect();
    assert_eq!(
        api_versions.len(),
        4,
        "registered, renamed, answered, confirmed: {listed}"
    );
    let page_versions = browser.script(
        "return [...document.querySelectorAll('#versions li')].map(li => Number(li.dataset.version));",
    );
    assert_eq!(page_versions, serde_json::json!(api_versions));
    let head = listed["head"].as_i64().unwrap();
    let registered = *api_versions.last().unwrap();
    let parent = listed["versions"][0]["parent"].as_i64().unwrap();
    browser.click(&format!("#versions button[data-view='{registered}']"));
    browser.wait_for(
        &format!("document.body.dataset.sceneVersion === '{registered}' && !document.body.classList.contains('busy')"),
        TURN,
    );
    assert_eq!(digest(browser), original);
    assert_eq!(
        fingerprint(&label_map(
            address,
            &format!("/v1/scenes/{scene_id}/labels.png?version={registered}")
        )),
        original
    );
    let viewing = browser.script("return document.getElementById('viewing').textContent;");
    assert!(
        viewing
            .as_str()
            .unwrap()
            .contains(&format!("Looking at version {registered}")),
        "{viewing}"
    );
    assert_eq!(
        listed_objects(browser).len(),
        objects.len(),
        "the registered version's objects"
    );
    browser.screenshot(&shots.join("09-registered-version.png"));
    browser.click("#back-to-current");
    browser.wait_for(
        &format!("document.body.dataset.sceneVersion === '{head}' && !document.body.classList.contains('busy')"),
        TURN,
    );
    assert_eq!(digest(browser), confirmed);
    assert_eq!(
        browser.script("return document.getElementById('viewing').getBoundingClientRect().height;"),
        0,
        "the note about an earlier version goes away"
    );

    // Split view: the version before on the left of a divider, dragged with the mouse and moved by keys.
    let stage = |what: &str| stage_data(browser, what);
    assert_eq!(stage("beforeVersion"), parent.to_string());
    assert_eq!(
        stage("beforeDigest"),
        fingerprint(&label_map(
            address,
            &format!("/v1/scenes/{scene_id}/labels.png?version={parent}")
        ))
    );
    assert_eq!(
        stage("beforeDigest"),
        held,
        "the confirmed change was made from the held picture"
    );
    assert_eq!(stage("split"), "", "no split until asked for");
    browser.click("#split");
    assert_eq!(stage("split"), "50");
    assert_eq!(
        browser.script("return document.getElementById('before-layer').hidden;"),
        false
    );
    let stage_width = browser
        .script("return document.getElementById('stage').getBoundingClientRect().width;")
        .as_f64()
        .unwrap();
    browser.drag_by("#divider", -stage_width / 4.0);
    let dragged: f64 = stage("split").parse().unwrap();
    assert!((dragged - 25.0).abs() <= 3.0, "dragged to {dragged}");
    browser.script("document.getElementById('divider').focus();");
    browser.press(&[RIGHT, RIGHT]);
    let moved: f64 = stage("split").parse().unwrap();
    assert_eq!(moved, dragged + 10.0);
    browser.screenshot(&shots.join("10-split.png"));
    browser.click(&format!("#versions button[data-compare='{registered}']"));
    browser.wait_for(
        &format!("document.getElementById('stage').dataset.beforeVersion === '{registered}'"),
        TURN,
    );
    assert_eq!(stage("beforeDigest"), original);
    browser.set_window(1366, 768);
    let fits = browser.script(
        "window.scrollTo(0, 0); const box = document.getElementById('stage').getBoundingClientRect(); \
         return [box.bottom, window.innerHeight, document.documentElement.scrollWidth, window.innerWidth];",
    );
    assert!(
        fits[0].as_f64().unwrap() <= fits[1].as_f64().unwrap(),
        "the whole picture shows under the page's head on a laptop screen: {fits}"
    );
    browser.screenshot(&shots.join("11a-laptop-top.png"));
    assert!(
        fits[2].as_f64().unwrap() <= fits[3].as_f64().unwrap(),
        "nothing wider than the window: {fits}"
    );
    browser.script("document.getElementById('stage').scrollIntoView({block: 'nearest'});");
    browser.screenshot(&shots.join("11-split-laptop.png"));
    browser.set_window(820, 1180);
    let fits = browser.script(
        "return [document.documentElement.scrollWidth, window.innerWidth, \
         document.getElementById('note').getBoundingClientRect().width, \
         document.getElementById('answer').getBoundingClientRect().width];",
    );
    let tablet_width = fits[1].as_f64().unwrap();
    assert!(
        fits[2].as_f64().unwrap() > 0.5 * tablet_width
            && fits[3].as_f64().unwrap() > 0.9 * tablet_width,
        "on a tablet the note box and the answer take the screen's width: {fits}"
    );
    assert!(
        fits[0].as_f64().unwrap() <= fits[1].as_f64().unwrap(),
        "nothing wider than a tablet: {fits}"
    );
    browser.screenshot(&shots.join("12-split-tablet.png"));
    browser.set_window(1280, 900);
    browser.click("#split");
    assert_eq!(stage("split"), "");
}

/// Reaches every control with Tab and points with the keyboard alone.
fn keyboard_alone(walk: &Walk, seen: &Seen) {
    let browser = &walk.browser;
    let address = walk.address;
    let shots = &walk.shots;
    let scene_id: i64 = 1;
    let graph = &seen.graph;
    let stage = |what: &str| stage_data(browser, what);
    // Keyboard alone: Tab reaches every control, each with a visible ring.
    browser.script("document.activeElement.blur(); window.scrollTo(0, 0);");
    let mut reached = Vec::new();
    for _ in 0..200 {
        browser.press(&[TAB]);
        let focused = browser.script(
            "const e = document.activeElement; const style = getComputedStyle(e); \
             const again = e.dataset.tabbed === 'yes'; if (e !== document.body) e.dataset.tabbed = 'yes'; \
             return [e.id || e.tagName.toLowerCase() + (e.dataset.view ? '-view' : e.dataset.object ? '-object' : ''), style.outlineStyle, again];",
        );
        let name = focused[0].as_str().unwrap().to_string();
        if focused[2] == true {
            break;
        }
        if name == "body" {
            continue;
        }
        assert_ne!(
            focused[1], "none",
            "{name} has the focus without a visible ring"
        );
        reached.push(name);
    }
    for control in [
        "summary",
        "show-labels",
        "label-opacity",
        "show-boxes",
        "show-moved",
        "split",
        "compare",
        "stage",
        "note",
        "send",
        "undo",
        "redo",
        "li-object",
        "button-view",
    ] {
        assert!(
            reached.iter().any(|name| name == control),
            "Tab never reaches {control}: {reached:?}"
        );
    }
    let keys = texts(browser, "#keys dt").join(" | ");
    for documented in [
        "Arrow keys on the picture",
        "Enter or Space on the picture",
        "Ctrl+Z",
        "1 to 9",
    ] {
        assert!(keys.contains(documented), "{keys}");
    }

    // Point with the keyboard: P goes to the picture, arrows move the cursor, Enter points, Esc drops it.
    browser.script("document.getElementById('undo').focus();");
    browser.press(&["p"]);
    assert_eq!(browser.script("return document.activeElement.id;"), "stage");
    let (width, height) = (
        graph["width"].as_i64().unwrap(),
        graph["height"].as_i64().unwrap(),
    );
    let step = (width as f64 / 40.0).round() as i64;
    let (centre_x, centre_y) = (width / 2, height / 2);
    assert_eq!(stage("cursor"), format!("{centre_x},{centre_y}"));
    browser.press(&[RIGHT, RIGHT, RIGHT, DOWN, DOWN, LEFT]);
    let (point_x, point_y) = (centre_x + 2 * step, centre_y + 2 * step);
    assert_eq!(stage("cursor"), format!("{point_x},{point_y}"));
    // The tip names the object under the cursor: the smallest frame holding it, as the mouse's hover does.
    let current = get(address, &format!("/v1/scenes/{scene_id}"), Some(TOKEN)).json();
    let under = current["objects"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|object| {
            let frame = &object["box"];
            let inside = |low: &str, high: &str, at: i64| {
                frame[low].as_i64().unwrap() <= at && at < frame[high].as_i64().unwrap()
            };
            inside("x0", "x1", point_x) && inside("y0", "y1", point_y)
        })
        .min_by_key(|object| object["area_pixels"].as_u64().unwrap())
        .expect("an object under the cursor");
    let tip = browser.script("return document.getElementById('hover-tip').textContent;");
    assert_eq!(
        tip.as_str().unwrap(),
        format!(
            "{} · object {}",
            under["class"].as_str().unwrap(),
            under["object_id"]
        )
    );
    browser.press(&[ENTER]);
    assert_eq!(
        browser.script("return document.getElementById('hover-tip').hidden;"),
        true,
        "the tip goes with the picture's focus"
    );
    let line = browser.script("return document.getElementById('pointer-line').textContent;");
    assert!(
        line.as_str()
            .unwrap()
            .contains(&format!("Pointing at {point_x}, {point_y}")),
        "{line}"
    );
    assert_eq!(browser.script("return document.activeElement.id;"), "note");
    assert_eq!(
        browser.script("return document.querySelectorAll('#frame-layer circle.point').length;"),
        1
    );
    browser.press(&[ESCAPE]);
    assert_eq!(
        browser.script("return document.querySelectorAll('#frame-layer circle.point').length;"),
        0
    );
    browser.script("document.getElementById('undo').focus();");
    browser.press(&["p", ENTER]);
    browser.wait_for(
        "document.getElementById('pointer-line').textContent.includes('Pointing at')",
        TURN,
    );
    browser.screenshot(&shots.join("13-keyboard-point.png"));
    send_note(browser, "that's a plant");
    let latest = texts(browser, "#history li");
    assert!(
        latest[0].contains(&format!("pointing at {point_x}, {point_y}")),
        "{latest:?}"
    );
}

/// Sends a photo with its depth from the chooser.
fn send_a_photo(walk: &Walk) {
    let browser = &walk.browser;
    let address = walk.address;
    let shots = &walk.shots;
    // A photo of one's own, with its depth, sent from the chooser: a new scene and a conversation on it.
    browser.click("#chooser summary");
    let photo = sayso_core::demo::demo_scene_path(
        &sayso_core::demo::demo_directory(None),
        Some("kitchen_breakfast"),
    )
    .unwrap();
    browser.type_into("#upload-image", photo.join("image.png").to_str().unwrap());
    browser.type_into("#upload-depth", photo.join("depth.png").to_str().unwrap());
    browser.click("#upload-form button[type=submit]");
    browser.wait_for(
        "document.body.dataset.conversation === '2' && !document.body.classList.contains('busy')",
        TURN,
    );
    let uploaded = get(address, "/v1/scenes/2", Some(TOKEN)).json();
    assert_eq!(uploaded["name"], "image.png");
    assert_eq!(
        digest(browser),
        fingerprint(&label_map(address, "/v1/scenes/2/labels.png"))
    );
    assert_eq!(
        listed_objects(browser).len(),
        uploaded["objects"].as_array().unwrap().len()
    );
    assert_eq!(
        browser.script("return document.getElementById('stage').dataset.movedPixels;"),
        "0",
        "a new scene is not compared with the last one"
    );
    browser.screenshot(&shots.join("14-uploaded.png"));
}
