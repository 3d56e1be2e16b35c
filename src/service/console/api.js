// The console's only door to the service: the documented /v1 API, with the operator's token when one is set.

const TOKEN_KEY = "sayso-console-token";

/** A failure the service answered with: its HTTP status, stable code and plain message. */
export class ApiFailure extends Error {
  constructor(status, code, message) {
    super(message);
    this.status = status;
    this.code = code;
  }
}

function versionQuery(version) {
  return version == null ? "" : `?version=${version}`;
}

export class Api {
  constructor() {
    this.token = sessionStorage.getItem(TOKEN_KEY) || "";
  }

  setToken(token) {
    this.token = token.trim();
    sessionStorage.setItem(TOKEN_KEY, this.token);
  }

  headers(withBody) {
    const headers = {};
    if (withBody) headers["Content-Type"] = "application/json";
    if (this.token) headers["Authorization"] = `Bearer ${this.token}`;
    return headers;
  }

  async send(method, path, body) {
    const response = await fetch(path, {
      method,
      headers: this.headers(body !== undefined),
      body: body === undefined ? undefined : JSON.stringify(body),
    });
    if (!response.ok) {
      let code = "http_" + response.status;
      let message = response.statusText;
      try {
        const error = await response.json();
        code = error.code || code;
        message = error.message || message;
      } catch (_) {
        // The body was not the JSON error shape; the status says enough.
      }
      throw new ApiFailure(response.status, code, message);
    }
    return response;
  }

  async json(method, path, body) {
    return (await this.send(method, path, body)).json();
  }

  /** A PNG route, decoded without colour management so index values stay exact. */
  async bitmap(path) {
    const blob = await (await this.send("GET", path)).blob();
    return createImageBitmap(blob, { colorSpaceConversion: "none", premultiplyAlpha: "none" });
  }

  health() { return this.json("GET", "/v1/health"); }
  classes() { return this.json("GET", "/v1/classes"); }
  registerScene(request) { return this.json("POST", "/v1/scenes", request); }
  /** A page of stored scenes (`after`: the previous page's next_after). */
  scenes(after) { return this.json("GET", `/v1/scenes?limit=20${after ? "&after=" + after : ""}`); }
  /** A page of the conversations this operator may read. */
  conversations(after) { return this.json("GET", `/v1/conversations?limit=20${after ? "&after=" + after : ""}`); }
  /** `version` null reads the version in force. */
  sceneGraph(sceneId, version) { return this.json("GET", `/v1/scenes/${sceneId}${versionQuery(version)}`); }
  labelMap(sceneId, version) { return this.bitmap(`/v1/scenes/${sceneId}/labels.png${versionQuery(version)}`); }
  overlay(sceneId, version) { return this.bitmap(`/v1/scenes/${sceneId}/overlay.png${versionQuery(version)}`); }
  versions(sceneId) { return this.json("GET", `/v1/scenes/${sceneId}/versions`); }
  openConversation(sceneId) { return this.json("POST", "/v1/conversations", { scene_id: sceneId }); }
  history(conversationId) { return this.json("GET", `/v1/conversations/${conversationId}`); }
  say(conversationId, text, focus) {
    return this.json("POST", `/v1/conversations/${conversationId}/utterances`, { text, focus: focus || null });
  }
  /** `what` is one of confirm, reject, undo, redo. */
  turn(conversationId, what) {
    return this.json("POST", `/v1/conversations/${conversationId}/${what}`);
  }
}

/** Reads a File as base64 (no data: prefix). */
export function fileBase64(file) {
  return new Promise((resolve, reject) => {
    const reader = new FileReader();
    reader.onload = () => resolve(String(reader.result).split(",", 2)[1] || "");
    reader.onerror = () => reject(reader.error);
    reader.readAsDataURL(file);
  });
}
