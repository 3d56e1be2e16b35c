// The console's wiring: choose a scene, open a conversation on it, send notes and answers, and redraw the
// picture and panels from the service's answers.

import { Api, ApiFailure, fileBase64 } from "./api.js";
import { Picture } from "./picture.js";
import * as panels from "./panels.js";

const api = new Api();
const byId = (id) => document.getElementById(id);
const state = { scene: null, conversation: null, point: null, busy: false };

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

async function redraw() {
  const [graph, overlay, labels] = await Promise.all([
    api.sceneGraph(state.scene),
    api.overlay(state.scene),
    api.labelMap(state.scene),
  ]);
  picture.show(overlay, labels, graph);
  panels.showLegend(picture.legend());
  panels.showObjects(graph, (objectId) => picture.drawFrames(objectId));
  byId("scene-title").textContent = `Scene ${graph.scene_id} “${graph.name}” · version ${graph.version} · ${graph.width}×${graph.height}${graph.room ? " · " + graph.room : ""}`;
  document.body.dataset.sceneVersion = String(graph.version);
}

async function refreshConversation() {
  const history = await api.history(state.conversation);
  panels.showHistory(history);
  panels.showHold(history.pending);
}

async function openScene(sceneId) {
  state.scene = sceneId;
  const conversation = await api.openConversation(sceneId);
  state.conversation = conversation.conversation_id;
  byId("workspace").hidden = false;
  byId("chooser").open = false;
  byId("answer").hidden = true;
  panels.showQuestion(null);
  picture.setCandidates([]);
  setPoint(null);
  await redraw();
  await refreshConversation();
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
    panels.showQuestion(reply.question, reply.candidates || [], (objectId) => say(`object ${objectId}`, null));
    picture.setCandidates(reply.question ? reply.candidates || [] : []);
    panels.showHold(reply.waiting);
    await redraw();
    await refreshConversation();
  });
}

async function turn(what) {
  if (!state.conversation) return;
  await exchange("problem", async () => {
    const reply = await api.turn(state.conversation, what);
    panels.showAnswer(reply);
    panels.showQuestion(null);
    picture.setCandidates([]);
    await redraw();
    await refreshConversation();
  });
}

byId("demo-form").addEventListener("submit", (event) => {
  event.preventDefault();
  exchange("chooser-problem", async () => {
    const created = await api.registerScene({ demo: byId("demo-name").value.trim() });
    await openScene(created.scene_id);
  });
});

byId("stored-form").addEventListener("submit", (event) => {
  event.preventDefault();
  exchange("chooser-problem", () => openScene(Number(byId("stored-id").value)));
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
const compare = byId("compare");
for (const start of ["pointerdown", "keydown"]) compare.addEventListener(start, (event) => {
  if (event.type === "keydown" && event.key !== " " && event.key !== "Enter") return;
  picture.compare(true);
});
for (const end of ["pointerup", "pointerleave", "keyup", "blur"]) compare.addEventListener(end, () => {
  picture.compare(false);
  picture.setMovedVisible(byId("show-moved").checked);
  layers();
});

document.addEventListener("keydown", (event) => {
  if (!state.conversation) return;
  const typing = event.target === byId("note") && byId("note").value !== "";
  const key = event.key.toLowerCase();
  if (event.key === "Escape") {
    setPoint(null);
  } else if ((event.ctrlKey || event.metaKey) && !typing && key === "z") {
    event.preventDefault();
    turn(event.shiftKey ? "redo" : "undo");
  } else if ((event.ctrlKey || event.metaKey) && !typing && key === "y") {
    event.preventDefault();
    turn("redo");
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
checkAccess().then(() => { document.body.dataset.ready = "yes"; });
