// The picture: the service's blended overlay as the base, the label map coloured by class on top (with an
// adjustable strength), the pixels the last turn moved, object frames, question candidates and the pointer.

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
    this.current = null;
    this.before = null;
    this.stage.addEventListener("mousemove", (event) => this.hover(event));
    this.stage.addEventListener("mouseleave", () => { this.tip.hidden = true; this.drawFrames(); });
    this.stage.addEventListener("click", (event) => {
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
    const sameSize = width === this.width && height === this.height;
    for (const canvas of [this.base, this.labelLayer, this.movedLayer]) {
      canvas.width = width;
      canvas.height = height;
    }
    this.frames.setAttribute("viewBox", `0 0 ${width} ${height}`);
    this.stage.style.aspectRatio = `${width} / ${height}`;
    // The overlay carries a legend panel to the right of the picture; only the picture part is drawn.
    this.base.getContext("2d").drawImage(overlay, 0, 0, width, height, 0, 0, width, height);
    const scratch = new OffscreenCanvas(width, height);
    const scratchContext = scratch.getContext("2d", { willReadFrequently: true });
    scratchContext.drawImage(labelMap, 0, 0);
    const rgba = scratchContext.getImageData(0, 0, width, height).data;
    const labels = new Uint8Array(width * height);
    for (let index = 0; index < labels.length; index++) labels[index] = rgba[index * 4];
    const previous = sameSize ? this.labels : null;
    if (this.current && sameSize) this.before = this.current;
    this.current = overlay;
    this.labels = labels;
    this.width = width;
    this.height = height;
    this.objects = graph.objects;
    this.paintLabels();
    this.paintMoved(previous);
    this.drawFrames();
    this.stage.dataset.version = String(graph.version);
    this.stage.dataset.labelsDigest = digest(labels);
  }

  paintLabels() {
    const image = new ImageData(this.width, this.height);
    for (let index = 0; index < this.labels.length; index++) {
      const label = this.labels[index];
      const entry = this.classes.get(label);
      if (label === UNLABELLED || !entry) continue;
      image.data[index * 4] = entry.colour[0];
      image.data[index * 4 + 1] = entry.colour[1];
      image.data[index * 4 + 2] = entry.colour[2];
      image.data[index * 4 + 3] = 255;
    }
    this.labelLayer.getContext("2d").putImageData(image, 0, 0);
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
    this.labelLayer.style.opacity = visible ? String(fraction) : "0";
  }

  setFramesVisible(visible) { this.frames.classList.toggle("quiet", !visible); }
  setMovedVisible(visible) { this.movedLayer.hidden = !visible; }

  /** While `on`, shows the picture as it was before the last change. */
  compare(on) {
    const shown = on && this.before ? this.before : this.current;
    if (!shown) return;
    this.base.getContext("2d").drawImage(shown, 0, 0, this.width, this.height, 0, 0, this.width, this.height);
    this.labelLayer.hidden = on;
    this.movedLayer.hidden = on;
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
    const object = at ? this.objectAt(at.x, at.y) : null;
    if (!object) {
      this.tip.hidden = true;
      this.drawFrames(null);
      return;
    }
    const stageBox = this.stage.getBoundingClientRect();
    this.tip.textContent = `${object.class} · object ${object.object_id}`;
    this.tip.style.left = `${event.clientX - stageBox.left + 12}px`;
    this.tip.style.top = `${event.clientY - stageBox.top + 12}px`;
    this.tip.hidden = false;
    this.drawFrames(object.object_id);
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
    if (this.point) {
      const radius = stroke * 6;
      frames.append(svgElement("circle", { cx: this.point.x + 0.5, cy: this.point.y + 0.5, r: radius, class: "point", "stroke-width": stroke * 2 }));
      frames.append(svgElement("circle", { cx: this.point.x + 0.5, cy: this.point.y + 0.5, r: stroke, class: "point-dot" }));
    }
  }
}
