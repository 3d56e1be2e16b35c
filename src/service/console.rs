//! The operator console: a small web page, served by the service itself, for correcting a scene by looking
//! at it (the picture with its labels, pointing, notes, questions, holds, undo and redo).
//!
//! Owns: the console's static files (HTML, CSS and plain JavaScript modules under `console/`, embedded in
//! the binary with `include_str!`) and the routes `GET /console` and `GET /console/{file}` that serve them.
//! Must not: reach the coordinator or the correction log. The page gets every piece of data through the
//! documented `/v1` API with the caller's own token, so it is that API's first client and holds no
//! privilege of its own; its files carry no data, so they are served without a token.

use axum::extract::Path;
use axum::http::{header, HeaderValue, StatusCode};
use axum::response::{IntoResponse, Response};
use axum::routing::get;
use axum::Router;

use super::error::ApiError;
use super::AppState;

/// One embedded file of the console.
struct ConsoleFile {
    name: &'static str,
    content_type: &'static str,
    text: &'static str,
}

/// Every file the console serves, by the name it is requested under.
const FILES: &[ConsoleFile] = &[
    ConsoleFile {
        name: "index.html",
        content_type: "text/html; charset=utf-8",
        text: include_str!("console/index.html"),
    },
    ConsoleFile {
        name: "console.css",
        content_type: "text/css; charset=utf-8",
        text: include_str!("console/console.css"),
    },
    ConsoleFile {
        name: "api.js",
        content_type: "text/javascript; charset=utf-8",
        text: include_str!("console/api.js"),
    },
    ConsoleFile {
        name: "picture.js",
        content_type: "text/javascript; charset=utf-8",
        text: include_str!("console/picture.js"),
    },
    ConsoleFile {
        name: "panels.js",
        content_type: "text/javascript; charset=utf-8",
        text: include_str!("console/panels.js"),
    },
    ConsoleFile {
        name: "main.js",
        content_type: "text/javascript; charset=utf-8",
        text: include_str!("console/main.js"),
    },
];

/// The console's routes, to be merged into the service's router outside the token check.
pub fn routes() -> Router<AppState> {
    Router::new()
        .route("/console", get(page))
        .route("/console/", get(page))
        .route("/console/{file}", get(file))
}

fn serve(found: &ConsoleFile) -> Response {
    let mut response = found.text.into_response();
    let headers = response.headers_mut();
    headers.insert(
        header::CONTENT_TYPE,
        HeaderValue::from_static(found.content_type),
    );
    // The files change with the binary; a browser must not keep a stale script across an upgrade.
    headers.insert(header::CACHE_CONTROL, HeaderValue::from_static("no-cache"));
    headers.insert(
        "x-content-type-options",
        HeaderValue::from_static("nosniff"),
    );
    response
}

async fn page() -> Response {
    serve(&FILES[0])
}

async fn file(Path(name): Path<String>) -> Response {
    match FILES.iter().find(|candidate| candidate.name == name) {
        Some(found) => serve(found),
        None => ApiError::caller(
            StatusCode::NOT_FOUND,
            "no_such_console_file",
            "the console has no file of that name; open /console",
        )
        .into_response(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_module_the_page_imports_is_served() {
        let mut imported = Vec::new();
        for source in FILES.iter().map(|file| file.text) {
            for piece in source.split(['"', '\'']) {
                if let Some(name) = piece.strip_prefix("./") {
                    if name.ends_with(".js") || name.ends_with(".css") {
                        imported.push(name.to_string());
                    }
                }
                if let Some(name) = piece.strip_prefix("/console/") {
                    imported.push(name.to_string());
                }
            }
        }
        assert!(
            imported.iter().any(|name| name == "main.js"),
            "{imported:?}"
        );
        for name in &imported {
            assert!(
                FILES.iter().any(|file| file.name == name),
                "{name} is referenced but not embedded"
            );
        }
    }
}
