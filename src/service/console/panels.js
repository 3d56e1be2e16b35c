// The panels beside the picture: the answer to a note, the question, the hold, the object list, the legend
// and the conversation. Each function takes API data and fills its part of the page; none talks to the API.

/** How each turn status reads to an operator. */
const VERDICTS = {
  applied: "Changed.",
  needs_confirmation: "Held: this touches a person, a pet or a hazard, so it waits for your yes or no.",
  needs_clarification: "Which one did you mean?",
  not_understood: "That note could not be read.",
  nothing_to_change: "The scene already says so; nothing moved.",
  confirmed: "Applied after your yes.",
  rejected: "Dropped; the scene stays as it was.",
  undone: "Taken back.",
  redone: "Put back.",
};

export function verdict(status) {
  return VERDICTS[status] || status;
}

function item(text, className) {
  const element = document.createElement("li");
  element.textContent = text;
  if (className) element.className = className;
  return element;
}

function fill(list, items, empty) {
  list.replaceChildren(...(items.length ? items : [item(empty, "muted")]));
}

export function describeChange(change) {
  const what = change.from && change.to ? `${change.from} → ${change.to}` : change.to ? `now ${change.to}` : change.from ? `no longer ${change.from}` : "";
  const where = change.object_id != null ? ` (object ${change.object_id})` : "";
  const size = change.pixels ? `, ${change.pixels} px` : "";
  return `${change.description || what}${where}${size}`;
}

/** Fills the answer card from an utterance answer or a confirm/reject/undo/redo answer. */
export function showAnswer(reply) {
  document.getElementById("answer").hidden = false;
  const verdictLine = document.getElementById("verdict");
  verdictLine.textContent = verdict(reply.status);
  verdictLine.dataset.status = reply.status;
  const reason = document.getElementById("answer-reason");
  reason.textContent = reply.reason || "";
  reason.hidden = !reply.reason;
  fill(
    document.getElementById("understood"),
    (reply.constraints || []).map((constraint) =>
      item(`${constraint.gloss} (${constraint.kind}, ${Math.round(constraint.confidence * 100)}% sure)`)),
    "nothing new",
  );
  fill(document.getElementById("moved"), (reply.changes || []).map((change) => item(describeChange(change))), "nothing");
  fill(
    document.getElementById("unmet"),
    (reply.unmet || []).map((unmet) => item(`${unmet.gloss}: ${unmet.reason}`, "warn")),
    "none",
  );
  fill(document.getElementById("conflicts"), (reply.conflicts || []).map((text) => item(text, "warn")), "none");
}

/** Shows a question and its candidates as buttons; `pick(objectId)` answers it. */
export function showQuestion(question, candidates, pick) {
  const panel = document.getElementById("question");
  panel.hidden = !question;
  if (!question) return;
  document.getElementById("question-text").textContent = question;
  const list = document.getElementById("candidates");
  list.replaceChildren(...candidates.map((candidate) => {
    const entry = document.createElement("li");
    const button = document.createElement("button");
    button.type = "button";
    button.dataset.candidate = candidate.object_id;
    button.textContent = `${candidate.description} · ${candidate.class || "object"} ${candidate.object_id}`;
    button.addEventListener("click", () => pick(candidate.object_id));
    entry.append(button);
    return entry;
  }));
}

/** Shows the change still waiting for a yes or no, or hides the panel. */
export function showHold(waiting) {
  const panel = document.getElementById("hold");
  panel.hidden = !waiting;
  if (!waiting) return;
  document.getElementById("hold-reason").textContent = waiting.reason;
  fill(document.getElementById("hold-changes"), waiting.changes.map((change) => item(describeChange(change))), "");
}

export function showObjects(graph, onHover) {
  document.getElementById("object-count").textContent = String(graph.objects.length);
  const list = document.getElementById("objects");
  list.replaceChildren(...graph.objects.map((object) => {
    const entry = item(`${object.object_id} · ${object.class}${object.safety ? " (needs a yes to change)" : ""}`);
    entry.dataset.object = object.object_id;
    entry.dataset.class = object.class;
    entry.tabIndex = 0;
    entry.addEventListener("mouseenter", () => onHover(object.object_id));
    entry.addEventListener("mouseleave", () => onHover(null));
    entry.addEventListener("focus", () => onHover(object.object_id));
    entry.addEventListener("blur", () => onHover(null));
    return entry;
  }));
}

export function showLegend(rows) {
  const list = document.getElementById("legend");
  list.replaceChildren(...rows.map(({ entry, pixels }) => {
    const row = document.createElement("li");
    const swatch = document.createElement("span");
    swatch.className = "swatch";
    swatch.style.background = `rgb(${entry.colour.join(",")})`;
    row.append(swatch, `${entry.name}${entry.safety ? " ⚠" : ""}`);
    row.title = `${pixels} px`;
    row.dataset.class = entry.name;
    return row;
  }));
}

const TURN_WORDS = { utterance: "note", confirm: "yes", reject: "no", undo: "take back", redo: "put back" };

export function showHistory(history) {
  document.getElementById("history-empty").hidden = history.turns.length > 0;
  const list = document.getElementById("history");
  list.replaceChildren(...history.turns.slice().reverse().map((turn) => {
    const entry = document.createElement("li");
    entry.dataset.status = turn.status;
    const head = document.createElement("div");
    const said = turn.kind === "utterance" ? `“${turn.text}”` : TURN_WORDS[turn.kind] || turn.kind;
    const pointed = turn.focus
      ? turn.focus.type === "pixel" ? ` · pointing at ${turn.focus.x}, ${turn.focus.y}` : ` · object ${turn.focus.object_id}`
      : "";
    head.textContent = `${said}${pointed}`;
    const foot = document.createElement("div");
    foot.className = "muted";
    const glosses = turn.constraints.map((constraint) => constraint.gloss).join("; ");
    const version = turn.scene_version != null ? ` · version ${turn.scene_version}` : "";
    foot.textContent = `${verdict(turn.status)}${glosses ? " " + glosses : ""}${version} · ${turn.operator}, ${when(turn.at, true)}`;
    entry.append(head, foot);
    return entry;
  }));
}

function button(text, onClick, data) {
  const element = document.createElement("button");
  element.type = "button";
  element.textContent = text;
  for (const [key, value] of Object.entries(data || {})) element.dataset[key] = value;
  element.addEventListener("click", onClick);
  return element;
}

/** A time as the service writes it (RFC 3339), shortened to date and minute. */
function when(at, seconds) {
  return at ? at.replace("T", " ").slice(0, seconds ? 19 : 16) : "";
}

/** Adds a page of stored scenes to the chooser; `open(sceneId)` opens one. */
export function addScenes(page, open, replace) {
  const list = document.getElementById("scene-list");
  const rows = page.scenes.map((scene) => {
    const entry = document.createElement("li");
    entry.append(button(`${scene.scene_id} · ${scene.name}`, () => open(scene.scene_id), { scene: scene.scene_id }));
    const about = document.createElement("span");
    about.className = "muted";
    about.textContent = ` version ${scene.version} · ${scene.width}×${scene.height}`;
    entry.append(about);
    return entry;
  });
  if (replace) fill(list, rows, "No scene stored yet: load a demo room or send a photo.");
  else list.append(...rows);
}

/** Adds a page of conversations to the chooser, newest first; `resume(id)` goes on with one. */
export function addConversations(page, names, resume, replace) {
  const list = document.getElementById("conversation-list");
  const rows = page.conversations.slice().reverse().map((conversation) => {
    const entry = document.createElement("li");
    const scene = names.get(conversation.scene_id) || `scene ${conversation.scene_id}`;
    entry.append(button(`${conversation.conversation_id} · on ${scene}`, () => resume(conversation.conversation_id),
      { conversation: conversation.conversation_id }));
    const about = document.createElement("span");
    about.className = conversation.pending ? "warn" : "muted";
    about.textContent = ` ${conversation.operator}, ${when(conversation.opened_at)}${conversation.pending ? " · waiting for your yes or no" : ""}`;
    entry.append(about);
    return entry;
  });
  if (replace) fill(list, rows, "None yet.");
  else list.append(...rows);
}

/** Lists the scene's versions; `view(version)` shows one, `compare(version)` sets it as the split's before. */
export function showVersions(listed, shown, before, view, compare) {
  document.getElementById("version-count").textContent = String(listed.versions.length);
  const list = document.getElementById("versions");
  list.replaceChildren(...listed.versions.map((version) => {
    const entry = document.createElement("li");
    entry.dataset.version = version.version;
    if (version.version === shown) entry.setAttribute("aria-current", "true");
    const head = document.createElement("div");
    const made = version.turn_id == null
      ? "as registered"
      : version.kind === "confirm" ? "a held change, confirmed"
      : version.text != null ? `“${version.text}”` : "a note in another operator's conversation";
    const standing = version.version === listed.head ? " · in force"
      : version.in_force ? "" : " · taken back or replaced";
    head.textContent = `Version ${version.version}: ${made}${standing}`;
    const foot = document.createElement("div");
    foot.className = "muted";
    foot.textContent = `${version.operator}${version.at ? ", " + when(version.at) : ""}${version.version === shown ? " · on the picture" : ""}${version.version === before ? " · compared as before" : ""}`;
    const actions = document.createElement("div");
    actions.className = "row";
    actions.append(
      button("View", () => view(version.version), { view: version.version }),
      button("Compare as before", () => compare(version.version), { compare: version.version }),
    );
    entry.append(head, foot, actions);
    return entry;
  }));
}
