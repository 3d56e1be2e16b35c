// The picture: the service's blended overlay as the base, the label map coloured by class on top (with an
// adjustable strength), the pixels the last turn moved, object frames, question candidates and the pointer;
// a second version ("before") drawn over the left part up to a draggable divider; a keyboard cursor.

const SVG = "http://www.w3.org/2000/svg";
const UNLABELLED = 255;

function svgElement(name, attributes) {
  const element = document.createElementNS(SVG, name);
  for (const [key, value] of Object.entries(attributes)) element.setAttribute(key, value);
  return element;
}

/** A short fingerprint of a label map, so a test (or a person) can tell two maps apart. */
function digest(labels) {
  let hash = 2166136261;
  for (let index = 0; index < labels.length; index++) {
    hash ^= labels[index];
    hash = Math.imul(hash, 16777619) >>> 0;
  }
  return hash.toString(16).padStart(8, "0");
}

export class Picture {
  constructor(onPoint, onPick) {
    this.stage = document.getElementById("stage");
    this.base = document.getElementById("base-layer");
    this.labelLayer = document.getElementById("label-layer");
    this.movedLayer = document.getElementById("moved-layer");
    this.frames = document.getElementById("frame-layer");
    this.tip = document.getElementById("hover-tip");
    this.onPoint = onPoint;
    this.onPick = onPick;
    this.classes = new Map();
    this.objects = [];
    this.candidates = [];
    this.point = null;
    this.labels = null;
    this.width = 0;
    this.height = 0;
    this.beforeLayer = document.getElementById("before-layer");
    this.divider = document.getElementById("divider");
    this.opacity = 0.55;
    this.labelsVisible = true;
    this.before = null;
    this.split = 50;
    this.splitOn = false;
    this.holding = false;
    this.cursor = null;
    this.stage.addEventListener("mousemove", (event) => this.hover(event));
    this.stage.addEventListener("keydown", (event) => this.key(event));
    this.stage.addEventListener("blur", () => { this.tip.hidden = true; this.drawFrames(); });
    this.divider.addEventListener("pointerdown", (event) => this.drag(event));
    this.divider.addEventListener("keydown", (event) => this.dividerKey(event));
    this.stage.addEventListener("mouseleave", () => { this.tip.hidden = true; this.drawFrames(); });
    this.stage.addEventListener("click", (event) => {
      if (event.target === this.divider) return;
      const at = this.pixelAt(event);
      if (at) this.onPoint(at.x, at.y);
    });
  }

  setClasses(classes) {
    this.classes = new Map(classes.map((entry) => [entry.class_id, entry]));
  }

  /** Shows a scene version: `overlay` and `labelMap` are ImageBitmaps, `graph` the scene graph. */
  show(overlay, labelMap, graph) {
    const width = graph.width;
    const height = graph.height;
    // Only another version of the same scene is compared with what was shown before.
    const sameScene = width === this.width && height === this.height && graph.scene_id === this.sceneId;
    this.sceneId = graph.scene_id;
    for (const canvas of [this.base, this.labelLayer, this.movedLayer, this.beforeLayer]) {
      canvas.width = width;
      canvas.height = height;
    }
    this.frames.setAttribute("viewBox", `0 0 ${width} ${height}`);
    this.stage.style.aspectRatio = `${width} / ${height}`;
    // As wide as the column allows, but never taller than the window leaves room for (a laptop's 768 rows).
    const widest = `calc((100vh - 12.5rem) * ${(width / height).toFixed(4)})`;
    this.stage.style.maxWidth = widest;
    // The picture's column is no wider than the picture, so the panels beside it get the rest.
    document.getElementById("workspace").style.setProperty("--picture-widest", widest);
    // The overlay carries a legend panel to the right of the picture; only the picture part is drawn.
    this.base.getContext("2d").drawImage(overlay, 0, 0, width, height, 0, 0, width, height);
    const previous = sameScene ? this.labels : null;
    this.width = width;
    this.height = height;
    const labels = this.readLabels(labelMap);
    this.current = overlay;
    this.labels = labels;
    this.objects = graph.objects;
    if (!sameScene) this.before = null;
    if (!sameScene) this.cursor = null;
    this.paintLabels();
    this.paintBefore();
    this.paintMoved(previous);
    this.drawFrames();
    this.stage.dataset.version = String(graph.version);
    this.stage.dataset.labelsDigest = digest(labels);
  }

  /** The label map in the class colours, unlabelled pixels clear. */
  colourise(labels) {
    const image = new ImageData(this.width, this.height);
    for (let index = 0; index < labels.length; index++) {
      const label = labels[index];
      const entry = this.classes.get(label);
      if (label === UNLABELLED || !entry) continue;
      image.data[index * 4] = entry.colour[0];
      image.data[index * 4 + 1] = entry.colour[1];
      image.data[index * 4 + 2] = entry.colour[2];
      image.data[index * 4 + 3] = 255;
    }
    return image;
  }

  paintLabels() {
    this.labelLayer.getContext("2d").putImageData(this.colourise(this.labels), 0, 0);
  }

  /**
   * Reads the bitmap of a label map into class ids. The service sends a palette PNG whose colours are the
   * classes' own (`GET /v1/classes`), so a colour names its class; any other colour (black: unlabelled) is
   * unlabelled.
   */
  readLabels(labelMap) {
    const scratch = new OffscreenCanvas(this.width, this.height);
    const context = scratch.getContext("2d", { willReadFrequently: true });
    context.drawImage(labelMap, 0, 0);
    const rgba = context.getImageData(0, 0, this.width, this.height).data;
    const byColour = new Map();
    for (const [id, entry] of this.classes) {
      byColour.set((entry.colour[0] << 16) | (entry.colour[1] << 8) | entry.colour[2], id);
    }
    const labels = new Uint8Array(this.width * this.height);
    for (let index = 0; index < labels.length; index++) {
      const colour = (rgba[index * 4] << 16) | (rgba[index * 4 + 1] << 8) | rgba[index * 4 + 2];
      const id = byColour.get(colour);
      labels[index] = id === undefined ? UNLABELLED : id;
    }
    return labels;
  }

  /** The version to compare with (its overlay and label map bitmaps), or null for none. */
  setBefore(version, overlay, labelMap) {
    this.before = overlay ? { version, overlay, labels: this.readLabels(labelMap) } : null;
    this.stage.dataset.beforeVersion = this.before ? String(version) : "";
    this.stage.dataset.beforeDigest = this.before ? digest(this.before.labels) : "";
    this.paintBefore();
  }

  /** Draws the version before on its own layer: its overlay, and its labels at the chosen strength. */
  paintBefore() {
    const context = this.beforeLayer.getContext("2d");
    context.clearRect(0, 0, this.width, this.height);
    if (this.before) {
      context.globalAlpha = 1;
      context.drawImage(this.before.overlay, 0, 0, this.width, this.height, 0, 0, this.width, this.height);
      if (this.labelsVisible && this.opacity > 0) {
        const scratch = new OffscreenCanvas(this.width, this.height);
        scratch.getContext("2d").putImageData(this.colourise(this.before.labels), 0, 0);
        context.globalAlpha = this.opacity;
        context.drawImage(scratch, 0, 0);
        context.globalAlpha = 1;
      }
    }
    this.placeSplit();
  }

  /** Shows the before layer left of the divider (split on), whole (held), or not at all. */
  placeSplit() {
    const showing = Boolean(this.before) && (this.splitOn || this.holding);
    const share = this.holding ? 100 : this.split;
    this.beforeLayer.hidden = !showing;
    this.beforeLayer.style.clipPath = `inset(0 ${100 - share}% 0 0)`;
    this.divider.hidden = !(this.before && this.splitOn) || this.holding;
    this.divider.style.left = `${this.split}%`;
    this.divider.setAttribute("aria-valuenow", String(Math.round(this.split)));
    this.stage.classList.toggle("split", showing && !this.holding);
    this.stage.dataset.split = showing ? String(Math.round(share)) : "";
  }

  setSplit(on) {
    this.splitOn = on;
    this.placeSplit();
  }

  moveDivider(percent) {
    this.split = Math.min(100, Math.max(0, percent));
    this.placeSplit();
  }

  drag(event) {
    event.preventDefault();
    event.stopPropagation();
    this.divider.setPointerCapture(event.pointerId);
    const move = (moved) => {
      const box = this.stage.getBoundingClientRect();
      this.moveDivider(((moved.clientX - box.left) / box.width) * 100);
    };
    const stop = () => {
      this.divider.removeEventListener("pointermove", move);
      this.divider.removeEventListener("pointerup", stop);
      this.divider.removeEventListener("pointercancel", stop);
    };
    this.divider.addEventListener("pointermove", move);
    this.divider.addEventListener("pointerup", stop);
    this.divider.addEventListener("pointercancel", stop);
  }

  dividerKey(event) {
    const steps = { ArrowLeft: -5, ArrowRight: 5, ArrowDown: -5, ArrowUp: 5, PageDown: -25, PageUp: 25 };
    if (event.key in steps) this.moveDivider(this.split + steps[event.key]);
    else if (event.key === "Home") this.moveDivider(0);
    else if (event.key === "End") this.moveDivider(100);
    else return;
    event.preventDefault();
    event.stopPropagation();
  }

  /** Hatches every pixel whose label differs from the version shown before. */
  paintMoved(previous) {
    const image = new ImageData(this.width, this.height);
    let moved = 0;
    if (previous) {
      for (let index = 0; index < this.labels.length; index++) {
        if (previous[index] === this.labels[index]) continue;
        moved++;
        const x = index % this.width;
        const y = Math.floor(index / this.width);
        const light = (x + y) % 8 < 4 ? 255 : 20;
        image.data.set([light, light, light, 230], index * 4);
      }
    }
    this.movedLayer.getContext("2d").putImageData(image, 0, 0);
    this.stage.dataset.movedPixels = String(moved);
  }

  /** Class counts of the label map, largest first: [{entry, pixels}]. */
  legend() {
    const counts = new Map();
    for (const label of this.labels || []) counts.set(label, (counts.get(label) || 0) + 1);
    return [...counts.entries()]
      .filter(([label]) => label !== UNLABELLED)
      .map(([label, pixels]) => ({
        entry: this.classes.get(label) || { class_id: label, name: `class ${label}`, colour: [0, 0, 0], safety: false },
        pixels,
      }))
      .sort((a, b) => b.pixels - a.pixels);
  }

  setOpacity(fraction, visible) {
    this.opacity = fraction;
    this.labelsVisible = visible;
    this.labelLayer.style.opacity = visible ? String(fraction) : "0";
    this.paintBefore();
  }

  setFramesVisible(visible) { this.frames.classList.toggle("quiet", !visible); }
  setMovedVisible(visible) { this.movedLayer.hidden = !visible; }

  /** While `on`, shows the whole picture as the version before (the split's left side). */
  compare(on) {
    this.holding = on;
    this.placeSplit();
  }

  setCandidates(candidates) {
    this.candidates = candidates || [];
    this.drawFrames();
  }

  setPoint(point) {
    this.point = point;
    this.drawFrames();
  }

  pixelAt(event) {
    const box = this.base.getBoundingClientRect();
    if (!this.width || box.width === 0) return null;
    const x = Math.floor(((event.clientX - box.left) / box.width) * this.width);
    const y = Math.floor(((event.clientY - box.top) / box.height) * this.height);
    if (x < 0 || y < 0 || x >= this.width || y >= this.height) return null;
    return { x, y };
  }

  /** The smallest object frame holding a pixel. */
  objectAt(x, y) {
    let best = null;
    for (const object of this.objects) {
      const frame = object.box;
      if (x < frame.x0 || x >= frame.x1 || y < frame.y0 || y >= frame.y1) continue;
      if (!best || object.area_pixels < best.area_pixels) best = object;
    }
    return best;
  }

  hover(event) {
    const at = this.pixelAt(event);
    const stageBox = this.stage.getBoundingClientRect();
    this.tell(at, event.clientX - stageBox.left, event.clientY - stageBox.top);
  }

  /** Shows the tip for the object at a pixel (or hides it), `left`/`top` in CSS pixels on the stage. */
  tell(at, left, top) {
    const object = at ? this.objectAt(at.x, at.y) : null;
    if (!object) {
      this.tip.hidden = true;
      this.drawFrames(null);
      return;
    }
    this.tip.textContent = `${object.class} · object ${object.object_id}`;
    this.tip.style.left = `${left + 12}px`;
    this.tip.style.top = `${top + 12}px`;
    this.tip.hidden = false;
    this.drawFrames(object.object_id);
  }

  /** The keyboard cursor: arrows move it (Shift: one pixel at a time), Enter or Space points there. */
  key(event) {
    if (event.target !== this.stage || !this.width || event.ctrlKey || event.metaKey || event.altKey) return;
    const step = event.shiftKey ? 1 : Math.max(1, Math.round(this.width / 40));
    const moves = { ArrowLeft: [-step, 0], ArrowRight: [step, 0], ArrowUp: [0, -step], ArrowDown: [0, step] };
    if (!this.cursor) this.cursor = { x: Math.floor(this.width / 2), y: Math.floor(this.height / 2) };
    if (event.key in moves) {
      const [dx, dy] = moves[event.key];
      this.cursor = {
        x: Math.min(this.width - 1, Math.max(0, this.cursor.x + dx)),
        y: Math.min(this.height - 1, Math.max(0, this.cursor.y + dy)),
      };
    } else if (event.key === "Enter" || event.key === " ") {
      // Pointing hands the keyboard to the note box; the tip goes with the picture's focus.
      event.preventDefault();
      this.onPoint(this.cursor.x, this.cursor.y);
      return;
    } else {
      return;
    }
    event.preventDefault();
    this.showCursor();
  }

  showCursor() {
    if (!this.cursor) return;
    this.stage.dataset.cursor = `${this.cursor.x},${this.cursor.y}`;
    const box = this.base.getBoundingClientRect();
    const scale = box.width / this.width;
    this.tell(this.cursor, (this.cursor.x + 0.5) * scale, (this.cursor.y + 0.5) * scale);
  }

  /** Called when the picture gets the keyboard focus: shows the cursor where it was (or in the middle). */
  focusCursor() {
    if (!this.width) return;
    if (!this.cursor) this.cursor = { x: Math.floor(this.width / 2), y: Math.floor(this.height / 2) };
    this.showCursor();
  }

  drawFrames(hovered) {
    const frames = this.frames;
    frames.replaceChildren();
    const stroke = Math.max(1, Math.round(Math.max(this.width, this.height) / 400));
    for (const object of this.objects) {
      const frame = object.box;
      const rect = svgElement("rect", {
        x: frame.x0, y: frame.y0, width: frame.x1 - frame.x0, height: frame.y1 - frame.y0,
        class: "frame" + (object.object_id === hovered ? " hovered" : "") + (object.safety ? " safety" : ""),
        "stroke-width": stroke,
        "data-object": object.object_id,
      });
      frames.append(rect);
    }
    this.candidates.forEach((candidate, order) => {
      if (!candidate.bbox) return;
      const frame = candidate.bbox;
      const group = svgElement("g", { class: "candidate", "data-candidate": candidate.object_id, tabindex: "-1" });
      group.append(svgElement("rect", {
        x: frame.x0, y: frame.y0, width: frame.x1 - frame.x0, height: frame.y1 - frame.y0,
        "stroke-width": stroke * 3,
      }));
      const tag = svgElement("text", { x: frame.x0 + stroke * 3, y: frame.y0 + stroke * 9, "font-size": stroke * 9 });
      tag.textContent = String(order + 1);
      group.append(tag);
      group.addEventListener("click", (event) => {
        event.stopPropagation();
        this.onPick(candidate.object_id);
      });
      frames.append(group);
    });
    if (this.cursor && document.activeElement === this.stage) {
      const arm = stroke * 10;
      const { x, y } = this.cursor;
      for (const [x1, y1, x2, y2] of [[x - arm, y, x - stroke * 2, y], [x + stroke * 2, y, x + arm, y],
        [x, y - arm, x, y - stroke * 2], [x, y + stroke * 2, x, y + arm]]) {
        frames.append(svgElement("line", { x1: x1 + 0.5, y1: y1 + 0.5, x2: x2 + 0.5, y2: y2 + 0.5, class: "cursor", "stroke-width": stroke * 2 }));
      }
    }
    if (this.point) {
      const radius = stroke * 6;
      frames.append(svgElement("circle", { cx: this.point.x + 0.5, cy: this.point.y + 0.5, r: radius, class: "point", "stroke-width": stroke * 2 }));
      frames.append(svgElement("circle", { cx: this.point.x + 0.5, cy: this.point.y + 0.5, r: stroke, class: "point-dot" }));
    }
  }
}
