// The console's wiring: choose a stored scene or a conversation to go on with (or register a scene), send
// notes and answers, browse and compare the scene's versions, and redraw the picture and panels from the
// service's answers. The open conversation is kept in the address (#conversation=N), so a reload goes on
// with it.

import { Api, ApiFailure, fileBase64 } from "./api.js";
import { Picture } from "./picture.js";
import * as panels from "./panels.js";

const api = new Api();
const byId = (id) => document.getElementById(id);
const state = {
  scene: null,
  conversation: null,
  point: null,
  busy: false,
  /** The version on the picture when it is not the one in force; null shows the one in force. */
  viewing: null,
  /** The version the split view compares with; null: the shown version's parent. */
  chosenBefore: null,
  versions: null,
  shown: null,
  questionOpen: false,
};

const picture = new Picture(
  (x, y) => setPoint({ x, y }),
  (objectId) => say(`object ${objectId}`, null),
);

function problem(where, error) {
  const line = byId(where);
  if (!error) {
    line.hidden = true;
    return;
  }
  line.hidden = false;
  line.textContent = error instanceof ApiFailure ? `${error.message} (${error.code})` : String(error.message || error);
}

/** Runs one exchange with the service, one at a time, asking for a token when the service wants one. */
async function exchange(where, work) {
  if (state.busy) return undefined;
  state.busy = true;
  byId("busy").hidden = false;
  document.body.classList.add("busy");
  try {
    problem(where, null);
    return await work();
  } catch (error) {
    if (error instanceof ApiFailure && error.status === 401) {
      await askToken(error.message);
      problem(where, new Error("Token set; try again."));
    } else {
      problem(where, error);
    }
    return undefined;
  } finally {
    state.busy = false;
    byId("busy").hidden = true;
    document.body.classList.remove("busy");
  }
}

function askToken(why) {
  const dialog = byId("token-dialog");
  const line = byId("token-problem");
  line.hidden = !why;
  line.textContent = why || "";
  byId("token-input").value = "";
  return new Promise((resolve) => {
    dialog.addEventListener("close", () => {
      api.setToken(byId("token-input").value);
      resolve();
    }, { once: true });
    dialog.showModal();
  });
}

/** Makes sure the calls we are about to make carry a token the service accepts. */
async function checkAccess() {
  for (;;) {
    try {
      picture.setClasses(await api.classes());
      return;
    } catch (error) {
      if (error instanceof ApiFailure && error.status === 401) {
        await askToken(api.token ? error.message : "");
      } else {
        problem("chooser-problem", error);
        return;
      }
    }
  }
}

function setPoint(point) {
  state.point = point;
  picture.setPoint(point);
  byId("pointer-line").textContent = point
    ? `Pointing at ${point.x}, ${point.y}; it goes with your next note (Esc drops it).`
    : "Click the picture to point at something; the point goes with your next note.";
  if (point) byId("note").focus();
}

function pick(objectId) {
  return say(`object ${objectId}`, null);
}

function showQuestion(question, candidates) {
  state.questionOpen = Boolean(question);
  panels.showQuestion(question, candidates || [], pick);
  picture.setCandidates(question ? candidates || [] : []);
}

async function redraw() {
  const version = state.viewing;
  const [graph, overlay, labels, versions] = await Promise.all([
    api.sceneGraph(state.scene, version),
    api.overlay(state.scene, version),
    api.labelMap(state.scene, version),
    api.versions(state.scene),
  ]);
  picture.show(overlay, labels, graph);
  state.shown = graph.version;
  state.versions = versions;
  panels.showLegend(picture.legend());
  panels.showObjects(graph, (objectId) => picture.drawFrames(objectId));
  byId("scene-title").textContent = `Scene ${graph.scene_id} “${graph.name}” · version ${graph.version} · ${graph.width}×${graph.height}${graph.room ? " · " + graph.room : ""}`;
  const past = graph.version !== versions.head;
  byId("viewing").hidden = !past;
  byId("viewing-text").textContent = past
    ? `Looking at version ${graph.version}; notes still go to version ${versions.head}, the one in force.`
    : "";
  document.body.dataset.sceneVersion = String(graph.version);
  await loadBefore();
}

/** The version the split compares with: the one chosen, else the shown version's parent. */
function beforeVersion() {
  if (state.chosenBefore != null && state.chosenBefore !== state.shown) return state.chosenBefore;
  const shown = state.versions && state.versions.versions.find((entry) => entry.version === state.shown);
  return shown ? shown.parent : null;
}

const beforeCache = new Map();

async function loadBefore() {
  const version = beforeVersion();
  if (version == null) {
    picture.setBefore(null);
  } else {
    const key = `${state.scene}/${version}`;
    if (!beforeCache.has(key)) {
      beforeCache.set(key, await Promise.all([api.overlay(state.scene, version), api.labelMap(state.scene, version)]));
      // A few versions are kept for going back and forth; the oldest fetched goes first.
      if (beforeCache.size > 4) beforeCache.delete(beforeCache.keys().next().value);
    }
    const [overlay, labels] = beforeCache.get(key);
    picture.setBefore(version, overlay, labels);
  }
  panels.showVersions(state.versions, state.shown, version, viewVersion, compareWith);
  const split = byId("split");
  split.disabled = version == null;
  byId("compare").disabled = version == null;
}

function viewVersion(version) {
  exchange("problem", async () => {
    state.viewing = state.versions && version === state.versions.head ? null : version;
    await redraw();
    // The picture, and the line saying which version it shows, come into view.
    byId(state.viewing == null ? "stage" : "viewing").scrollIntoView({ block: state.viewing == null ? "nearest" : "start" });
  });
}

function compareWith(version) {
  exchange("problem", async () => {
    state.chosenBefore = version;
    await loadBefore();
    setSplit(true);
  });
}

function setSplit(on) {
  byId("split").setAttribute("aria-pressed", String(on));
  picture.setSplit(on);
}

async function refreshConversation() {
  const history = await api.history(state.conversation);
  panels.showHistory(history);
  panels.showHold(history.pending);
  return history;
}

function enterWorkspace(conversationId) {
  state.conversation = conversationId;
  state.viewing = null;
  state.chosenBefore = null;
  byId("workspace").hidden = false;
  byId("chooser").open = false;
  byId("answer").hidden = true;
  showQuestion(null);
  setPoint(null);
  history.replaceState(null, "", `#conversation=${conversationId}`);
}

async function openScene(sceneId) {
  state.scene = sceneId;
  const conversation = await api.openConversation(sceneId);
  enterWorkspace(conversation.conversation_id);
  await redraw();
  await refreshConversation();
  document.body.dataset.conversation = String(state.conversation);
  byId("note").focus();
}

/** Goes on with an earlier conversation: its picture, notes, open question and held change come back. */
async function resume(conversationId) {
  const earlier = await api.history(conversationId);
  state.scene = earlier.scene_id;
  enterWorkspace(conversationId);
  await redraw();
  const restored = await refreshConversation();
  showQuestion(restored.question, restored.candidates);
  document.body.dataset.conversation = String(state.conversation);
  byId("note").focus();
}

async function say(text, point) {
  if (!state.conversation || !text.trim()) return;
  await exchange("problem", async () => {
    const focus = point ? { type: "pixel", x: point.x, y: point.y } : null;
    const reply = await api.say(state.conversation, text.trim(), focus);
    byId("note").value = "";
    setPoint(null);
    panels.showAnswer(reply);
    showQuestion(reply.question, reply.candidates);
    panels.showHold(reply.waiting);
    state.viewing = null;
    state.chosenBefore = null;
    await redraw();
    await refreshConversation();
  });
}

async function turn(what) {
  if (!state.conversation) return;
  await exchange("problem", async () => {
    const reply = await api.turn(state.conversation, what);
    panels.showAnswer(reply);
    showQuestion(null);
    state.viewing = null;
    state.chosenBefore = null;
    await redraw();
    await refreshConversation();
  });
}

/** Fills the chooser's lists of stored scenes and conversations (first pages). */
async function loadLists() {
  const names = new Map();
  const scenes = await api.scenes();
  for (const scene of scenes.scenes) names.set(scene.scene_id, scene.name);
  panels.addScenes(scenes, (sceneId) => exchange("chooser-problem", () => openScene(sceneId)), true);
  const more = byId("scene-more");
  more.hidden = scenes.next_after == null;
  more.onclick = () => exchange("chooser-problem", async () => {
    const page = await api.scenes(more.dataset.after);
    for (const scene of page.scenes) names.set(scene.scene_id, scene.name);
    panels.addScenes(page, (sceneId) => exchange("chooser-problem", () => openScene(sceneId)), false);
    more.hidden = page.next_after == null;
    more.dataset.after = page.next_after || "";
  });
  more.dataset.after = scenes.next_after || "";
  const conversations = await api.conversations();
  const resumeOne = (conversationId) => exchange("chooser-problem", () => resume(conversationId));
  panels.addConversations(conversations, names, resumeOne, true);
  const moreConversations = byId("conversation-more");
  moreConversations.hidden = conversations.next_after == null;
  moreConversations.dataset.after = conversations.next_after || "";
  moreConversations.onclick = () => exchange("chooser-problem", async () => {
    const page = await api.conversations(moreConversations.dataset.after);
    panels.addConversations(page, names, resumeOne, false);
    moreConversations.hidden = page.next_after == null;
    moreConversations.dataset.after = page.next_after || "";
  });
  document.body.dataset.listsLoaded = "yes";
}

byId("chooser").addEventListener("toggle", () => {
  if (byId("chooser").open && document.body.dataset.ready === "yes") exchange("chooser-problem", loadLists);
});

byId("demo-form").addEventListener("submit", (event) => {
  event.preventDefault();
  exchange("chooser-problem", async () => {
    const created = await api.registerScene({ demo: byId("demo-name").value.trim() });
    await openScene(created.scene_id);
  });
});

byId("upload-form").addEventListener("submit", (event) => {
  event.preventDefault();
  exchange("chooser-problem", async () => {
    const image = byId("upload-image").files[0];
    const depth = byId("upload-depth").files[0];
    const request = { name: image.name, image_base64: await fileBase64(image) };
    if (depth) request.depth_png_base64 = await fileBase64(depth);
    const created = await api.registerScene(request);
    await openScene(created.scene_id);
  });
});

byId("note-form").addEventListener("submit", (event) => {
  event.preventDefault();
  say(byId("note").value, state.point);
});

byId("confirm").addEventListener("click", () => turn("confirm"));
byId("reject").addEventListener("click", () => turn("reject"));
byId("undo").addEventListener("click", () => turn("undo"));
byId("redo").addEventListener("click", () => turn("redo"));

function layers() {
  picture.setOpacity(Number(byId("label-opacity").value) / 100, byId("show-labels").checked);
}
byId("label-opacity").addEventListener("input", layers);
byId("show-labels").addEventListener("change", layers);
byId("show-boxes").addEventListener("change", () => picture.setFramesVisible(byId("show-boxes").checked));
byId("show-moved").addEventListener("change", () => picture.setMovedVisible(byId("show-moved").checked));
byId("split").addEventListener("click", () => setSplit(byId("split").getAttribute("aria-pressed") !== "true"));
byId("back-to-current").addEventListener("click", () => viewVersion(null));
byId("stage").addEventListener("focus", () => picture.focusCursor());
const compare = byId("compare");
for (const start of ["pointerdown", "keydown"]) compare.addEventListener(start, (event) => {
  if (event.type === "keydown" && event.key !== " " && event.key !== "Enter") return;
  picture.compare(true);
});
for (const end of ["pointerup", "pointerleave", "keyup", "blur"]) compare.addEventListener(end, () => picture.compare(false));

/** Whether a key press is going into a text field (where letters and digits are words, not shortcuts). */
function typingIn(target) {
  return target instanceof HTMLInputElement && !["checkbox", "range", "file"].includes(target.type);
}

document.addEventListener("keydown", (event) => {
  if (!state.conversation || event.defaultPrevented) return;
  const typing = event.target === byId("note") && byId("note").value !== "";
  const key = event.key.toLowerCase();
  const plain = !event.ctrlKey && !event.metaKey && !event.altKey && !typingIn(event.target);
  if (event.key === "Escape") {
    setPoint(null);
  } else if ((event.ctrlKey || event.metaKey) && !typing && key === "z") {
    event.preventDefault();
    turn(event.shiftKey ? "redo" : "undo");
  } else if ((event.ctrlKey || event.metaKey) && !typing && key === "y") {
    event.preventDefault();
    turn("redo");
  } else if (plain && /^[1-9]$/.test(event.key) && state.questionOpen) {
    const choice = document.querySelectorAll("#candidates button")[Number(event.key) - 1];
    if (choice) {
      event.preventDefault();
      choice.click();
    }
  } else if (plain && key === "n") {
    event.preventDefault();
    byId("note").focus();
  } else if (plain && key === "p") {
    event.preventDefault();
    byId("stage").focus();
  } else if (plain && key === "s" && !byId("split").disabled) {
    event.preventDefault();
    byId("split").click();
  }
});

// Dictation, where the browser offers it: the words land in the note box to be read before sending.
const Recognition = window.SpeechRecognition || window.webkitSpeechRecognition;
if (Recognition) {
  const speak = byId("speak");
  speak.hidden = false;
  speak.addEventListener("click", () => {
    const recognition = new Recognition();
    recognition.lang = document.documentElement.lang || "en";
    // The Web Speech API (W3C) gives its best guess first; its text field is named by that API.
    recognition.onresult = (event) => {
      const [best] = event.results[0];
      byId("note").value = best.transcript;
      byId("note").focus();
    };
    recognition.onerror = (event) => problem("problem", new Error(`dictation: ${event.error}`));
    recognition.start();
  });
}

layers();
checkAccess().then(async () => {
  document.body.dataset.ready = "yes";
  const earlier = /^#conversation=(\d+)$/.exec(location.hash);
  if (earlier) {
    await exchange("chooser-problem", async () => {
      try {
        await resume(Number(earlier[1]));
      } catch (error) {
        // Not a conversation this operator may go on with: show the lists, and say why.
        history.replaceState(null, "", location.pathname);
        await loadLists();
        throw error;
      }
    });
  } else {
    await exchange("chooser-problem", loadLists);
  }
});
