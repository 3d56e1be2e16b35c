//! The refusals hyper gives before the router sees a request, in the JSON error shape.
//!
//! Owns: `JsonHeadRefusals`, the connection's byte stream as hyper sees it. When hyper cannot read a
//! request head (a malformed request line or header: 400; a request target over its limit: 414; more
//! than `server::HEADER_COUNT_HARD_LIMIT` headers or a head over its read buffer: 431) it answers on its
//! own, with a head and no body, and closes the connection; hyper has no hook for that answer. This
//! stream recognises that one answer as hyper writes it -- one write holding exactly a status line of
//! 400, 414 or 431 and no header but `content-length: 0`, `date` and `connection`, ending at the head's
//! end -- and writes the same status with the JSON error shape in its place. No answer of the router
//! has that form (every refusal of ours carries a JSON body), so nothing else is touched; every other
//! write is passed through after one comparison of its first bytes.
//! Must not: parse requests, buffer reads, or change any answer the router gives.

use std::io;
use std::pin::Pin;
use std::task::{ready, Context, Poll};

use axum::http::StatusCode;
use tokio::io::{AsyncRead, AsyncWrite, ReadBuf};

use super::error::ApiError;

/// A connection's stream with hyper's bare head refusals answered in the JSON shape.
pub struct JsonHeadRefusals<S> {
    inner: S,
    /// The JSON refusal being written in place of hyper's, and how much of it is written.
    replacement: Vec<u8>,
    written: usize,
    /// The length of hyper's answer it replaces (reported back as written once the replacement is).
    replaced: usize,
}

impl<S> JsonHeadRefusals<S> {
    pub fn new(inner: S) -> JsonHeadRefusals<S> {
        JsonHeadRefusals {
            inner,
            replacement: Vec::new(),
            written: 0,
            replaced: 0,
        }
    }
}

/// The refusal's code and message for a status hyper answers a head it cannot read with.
fn refusal(status: StatusCode) -> Option<ApiError> {
    let (code, message) = match status {
        StatusCode::BAD_REQUEST => (
            "malformed_request",
            "the request line or a header could not be read as HTTP/1.1",
        ),
        StatusCode::URI_TOO_LONG => (
            "uri_too_long",
            "the request target is far longer than the 8 KiB the service takes",
        ),
        StatusCode::REQUEST_HEADER_FIELDS_TOO_LARGE => (
            "headers_too_large",
            "the request head is far over the 100 headers and 16 KiB the service takes",
        ),
        _ => return None,
    };
    Some(ApiError::caller(status, code, message))
}

/// The JSON answer to put in place of `written`, if `written` is hyper's bare answer to an unreadable
/// head.
pub(crate) fn replacement_for(written: &[u8]) -> Option<Vec<u8>> {
    // Cheap first: every answer starts with its status line; only three statuses are candidates.
    let status_line_start = written.get(..13)?;
    let status = match status_line_start {
        b"HTTP/1.1 400 " => StatusCode::BAD_REQUEST,
        b"HTTP/1.1 414 " => StatusCode::URI_TOO_LONG,
        b"HTTP/1.1 431 " => StatusCode::REQUEST_HEADER_FIELDS_TOO_LARGE,
        _ => return None,
    };
    let head = written.strip_suffix(b"\r\n\r\n")?;
    if head.windows(4).any(|window| window == b"\r\n\r\n") {
        return None;
    }
    let text = std::str::from_utf8(head).ok()?;
    let mut lines = text.split("\r\n");
    let status_line = lines.next()?;
    let mut empty_body = false;
    let mut date = None;
    for line in lines {
        let (name, value) = line.split_once(':')?;
        match (name.to_ascii_lowercase().as_str(), value.trim()) {
            ("content-length", "0") => empty_body = true,
            ("date", value) => date = Some(value),
            ("connection", _) => {}
            _ => return None,
        }
    }
    if !empty_body {
        return None;
    }
    let body = serde_json::to_string(&refusal(status)?.body()).ok()?;
    let date = date.map_or(String::new(), |date| format!("date: {date}\r\n"));
    Some(
        format!(
            "{status_line}\r\ncontent-type: application/json\r\nconnection: close\r\n{date}\
             content-length: {}\r\n\r\n{body}",
            body.len()
        )
        .into_bytes(),
    )
}

impl<S: AsyncRead + Unpin> AsyncRead for JsonHeadRefusals<S> {
    fn poll_read(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        buf: &mut ReadBuf<'_>,
    ) -> Poll<io::Result<()>> {
        Pin::new(&mut self.inner).poll_read(cx, buf)
    }
}

impl<S: AsyncWrite + Unpin> AsyncWrite for JsonHeadRefusals<S> {
    fn poll_write(
        mut self: Pin<&mut Self>,
        cx: &mut Context<'_>,
        buf: &[u8],
    ) -> Poll<io::Result<usize>> {
        let this = &mut *self;
        if this.replacement.is_empty() {
            match replacement_for(buf) {
                Some(replacement) => {
                    this.replacement = replacement;
                    this.written = 0;
                    this.replaced = buf.len();
                }
                None => return Pin::new(&mut this.inner).poll_write(cx, buf),
            }
        }
        // A write that returned Pending is called again with the same bytes: go on where it stopped.
        while this.written < this.replacement.len() {
            let count = ready!(
                Pin::new(&mut this.inner).poll_write(cx, &this.replacement[this.written..])
            )?;
            if count == 0 {
                return Poll::Ready(Err(io::ErrorKind::WriteZero.into()));
            }
            this.written += count;
        }
        this.replacement.clear();
        Poll::Ready(Ok(this.replaced))
    }

    fn poll_flush(mut self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        Pin::new(&mut self.inner).poll_flush(cx)
    }

    fn poll_shutdown(mut self: Pin<&mut Self>, cx: &mut Context<'_>) -> Poll<io::Result<()>> {
        Pin::new(&mut self.inner).poll_shutdown(cx)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hypers_bare_refusals_are_replaced_and_nothing_else() {
        let bare = b"HTTP/1.1 431 Request Header Fields Too Large\r\ncontent-length: 0\r\n\
                     date: Sat, 05 Dec 2026 01:20:00 GMT\r\n\r\n";
        let replaced = String::from_utf8(replacement_for(bare).expect("replaced")).unwrap();
        let (head, body) = replaced.split_once("\r\n\r\n").unwrap();
        assert!(head.starts_with("HTTP/1.1 431 Request Header Fields Too Large\r\n"));
        assert!(head.contains("content-type: application/json"));
        assert!(head.contains(&format!("content-length: {}", body.len())));
        assert!(head.contains("date: Sat, 05 Dec 2026 01:20:00 GMT"));
        let json: serde_json::Value = serde_json::from_str(body).unwrap();
        assert_eq!(json["code"], "headers_too_large");
        for status in ["400 Bad Request", "414 URI Too Long"] {
            let bare = format!("HTTP/1.1 {status}\r\ncontent-length: 0\r\n\r\n");
            assert!(replacement_for(bare.as_bytes()).is_some(), "{status}");
        }
        // Answers of the router: a body, other headers, other statuses, or more after the head.
        for kept in [
            "HTTP/1.1 400 Bad Request\r\ncontent-type: application/json\r\ncontent-length: 2\r\n\r\n{}",
            "HTTP/1.1 400 Bad Request\r\ncontent-length: 0\r\nx-request-id: 7\r\n\r\n",
            "HTTP/1.1 404 Not Found\r\ncontent-length: 0\r\n\r\n",
            "HTTP/1.1 200 OK\r\ncontent-length: 0\r\n\r\n",
            "HTTP/1.1 431 Request Header Fields Too Large\r\ncontent-length: 0\r\n\r\nHTTP/1.1 200 OK\r\n\r\n",
            "HTTP/1.1 400 Bad Request\r\ncontent-length: 0\r\n",
            "HTTP/1.1 4",
        ] {
            assert_eq!(replacement_for(kept.as_bytes()), None, "{kept:?}");
        }
    }
}
