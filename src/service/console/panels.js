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
    entry.addEventListener("mouseenter", () => onHover(object.object_id));
    entry.addEventListener("mouseleave", () => onHover(null));
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
    foot.textContent = `${verdict(turn.status)}${glosses ? " " + glosses : ""}${version} · ${turn.operator}, ${turn.at}`;
    entry.append(head, foot);
    return entry;
  }));
}
