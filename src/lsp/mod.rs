//! `kickback lsp`: the checker behind an editor, over the Language Server Protocol on stdin
//! and stdout. A thin front: each buffer is checked by [`crate::check::check_buffer`] (its
//! unsaved text, includes from disk), and every answer — diagnostics, hovers, definitions,
//! the outline, code actions — is read from that check's findings and facts
//! (`features.rs`). Nothing here computes a physical quantity.
//!
//! Requests are answered in order on one thread. A change is checked once the buffer has been
//! quiet for the debounce interval, so typing does not queue a check per key.

mod convert;
mod features;

use crate::check::{check_buffer, BufferCheck, CheckOptions};
use lsp_server::{Connection, ExtractError, Message, Notification, Request, RequestId, Response};
use lsp_types::notification::{
    DidChangeTextDocument, DidCloseTextDocument, DidOpenTextDocument, DidSaveTextDocument,
    Notification as _, PublishDiagnostics,
};
use lsp_types::request::{
    CodeActionRequest, DocumentSymbolRequest, GotoDefinition, HoverRequest, Request as _,
};
use lsp_types::{
    CodeActionOrCommand, CodeActionProviderCapability, DocumentSymbolResponse,
    GotoDefinitionResponse, Hover, HoverContents, HoverProviderCapability, MarkupContent,
    MarkupKind, OneOf, PublishDiagnosticsParams, ServerCapabilities, ServerInfo,
    TextDocumentSyncCapability, TextDocumentSyncKind, Uri,
};
use std::collections::{BTreeMap, BTreeSet};
use std::path::PathBuf;
use std::str::FromStr;
use std::time::{Duration, Instant};

/// How long a buffer must be quiet after a change before it is checked, unless the caller
/// says otherwise.
pub const DEFAULT_DEBOUNCE: Duration = Duration::from_millis(30);

/// What the server needs from the command line.
#[derive(Clone, Debug)]
pub struct ServerOptions {
    pub check: CheckOptions,
    pub debounce: Duration,
}

/// One open buffer.
struct Document {
    path: PathBuf,
    text: String,
    version: Option<i32>,
    checked: Option<BufferCheck>,
    /// URIs of other files this buffer's last check put diagnostics on (its includes).
    published: BTreeSet<String>,
}

struct Server<'a> {
    connection: &'a Connection,
    options: ServerOptions,
    documents: BTreeMap<String, Document>,
    /// Buffers changed and not yet checked, with when they may be.
    due: BTreeMap<String, Instant>,
    /// Where the rule pages were written for the editor to open.
    pages: Option<PathBuf>,
}

/// Serves on stdin and stdout until the editor says `exit`.
pub fn serve_stdio(options: ServerOptions) -> Result<(), String> {
    let (connection, io_threads) = Connection::stdio();
    serve(&connection, options)?;
    drop(connection);
    // After `exit` the editor may close its end before the last write is flushed: the
    // session is over either way.
    let _ = io_threads.join();
    Ok(())
}

/// Serves on a connection: the handshake, then messages until `exit`.
pub fn serve(connection: &Connection, options: ServerOptions) -> Result<(), String> {
    let capabilities = ServerCapabilities {
        text_document_sync: Some(TextDocumentSyncCapability::Kind(TextDocumentSyncKind::FULL)),
        hover_provider: Some(HoverProviderCapability::Simple(true)),
        definition_provider: Some(OneOf::Left(true)),
        document_symbol_provider: Some(OneOf::Left(true)),
        code_action_provider: Some(CodeActionProviderCapability::Simple(true)),
        ..ServerCapabilities::default()
    };
    let initialize = serde_json::json!({
        "capabilities": capabilities,
        "serverInfo": ServerInfo {
            name: "kickback".into(),
            version: Some(env!("CARGO_PKG_VERSION").into()),
        },
    });
    let refused =
        |e: lsp_server::ProtocolError| format!("the editor did not start the session: {e}");
    let (id, _) = connection.initialize_start().map_err(refused)?;
    connection
        .initialize_finish(id, initialize)
        .map_err(refused)?;
    let mut server = Server {
        connection,
        options,
        documents: BTreeMap::new(),
        due: BTreeMap::new(),
        pages: pages_folder(),
    };
    server.run()
}

/// A folder to write the rule pages into, so that a diagnostic can link to its rule's page.
fn pages_folder() -> Option<PathBuf> {
    let base = std::env::var_os("XDG_CACHE_HOME")
        .map(PathBuf::from)
        .filter(|p| p.is_absolute())
        .or_else(|| std::env::var_os("HOME").map(|h| PathBuf::from(h).join(".cache")))
        .unwrap_or_else(std::env::temp_dir);
    let folder = base
        .join("kickback")
        .join(env!("CARGO_PKG_VERSION"))
        .join("rules");
    std::fs::create_dir_all(&folder).ok()?;
    Some(folder)
}

impl Server<'_> {
    fn run(&mut self) -> Result<(), String> {
        loop {
            let message = match self.due.values().min().copied() {
                Some(deadline) => {
                    let wait = deadline.saturating_duration_since(Instant::now());
                    match self.connection.receiver.recv_timeout(wait) {
                        Ok(message) => Some(message),
                        Err(crossbeam_timeout) if crossbeam_timeout.is_timeout() => None,
                        Err(_) => return Ok(()),
                    }
                }
                None => match self.connection.receiver.recv() {
                    Ok(message) => Some(message),
                    Err(_) => return Ok(()),
                },
            };
            match message {
                None => self.check_due(),
                Some(Message::Request(request)) => {
                    // An error here means the editor asked to shut down and then went away
                    // without `exit`: the session is over all the same.
                    if self.connection.handle_shutdown(&request).unwrap_or(true) {
                        return Ok(());
                    }
                    self.check_due_now();
                    self.request(request);
                }
                Some(Message::Notification(note)) => self.notification(note),
                Some(Message::Response(_)) => {}
            }
        }
    }

    fn send(&self, message: Message) {
        // The editor went away: the receiving side ends the loop.
        let _ = self.connection.sender.send(message);
    }

    /// Checks every buffer whose quiet interval has passed.
    fn check_due(&mut self) {
        let now = Instant::now();
        let ready: Vec<String> = self
            .due
            .iter()
            .filter(|(_, at)| **at <= now)
            .map(|(uri, _)| uri.clone())
            .collect();
        for uri in ready {
            self.due.remove(&uri);
            self.check(&uri);
        }
    }

    /// Before answering a request, buffers still waiting are checked, so the answer reads the
    /// text the editor has.
    fn check_due_now(&mut self) {
        let waiting: Vec<String> = std::mem::take(&mut self.due).into_keys().collect();
        for uri in waiting {
            self.check(&uri);
        }
    }

    fn check(&mut self, key: &str) {
        let connection = self.connection;
        let send = |m: Message| {
            let _ = connection.sender.send(m);
        };
        let Some(doc) = self.documents.get_mut(key) else {
            return;
        };
        let checked = check_buffer(&doc.path, &doc.text, &self.options.check);
        let Ok(uri) = Uri::from_str(key) else {
            return;
        };
        let pages = self.pages.clone();
        let link = |rule: &str| page_link(pages.as_deref(), rule);
        let by_file = features::diagnostics(&checked, &uri, &link);
        let mut now_published = BTreeSet::new();
        for (file_key, (file_uri, diagnostics)) in by_file {
            let version = (file_key == key).then_some(doc.version).flatten();
            if file_key != key {
                now_published.insert(file_key);
            }
            send(publish(file_uri, diagnostics, version));
        }
        for stale in doc.published.difference(&now_published) {
            if let Ok(stale_uri) = Uri::from_str(stale) {
                send(publish(stale_uri, Vec::new(), None));
            }
        }
        doc.published = now_published;
        doc.checked = Some(checked);
    }

    fn notification(&mut self, note: Notification) {
        match note.method.as_str() {
            DidOpenTextDocument::METHOD => {
                let Ok(params) = note
                    .extract::<lsp_types::DidOpenTextDocumentParams>(DidOpenTextDocument::METHOD)
                else {
                    return;
                };
                let doc = params.text_document;
                let key = doc.uri.as_str().to_string();
                self.documents.insert(
                    key.clone(),
                    Document {
                        path: convert::path_of(&doc.uri),
                        text: doc.text,
                        version: Some(doc.version),
                        checked: None,
                        published: BTreeSet::new(),
                    },
                );
                self.due.remove(&key);
                self.check(&key);
            }
            DidChangeTextDocument::METHOD => {
                let Ok(params) = note.extract::<lsp_types::DidChangeTextDocumentParams>(
                    DidChangeTextDocument::METHOD,
                ) else {
                    return;
                };
                let key = params.text_document.uri.as_str().to_string();
                let Some(doc) = self.documents.get_mut(&key) else {
                    return;
                };
                // Whole-text sync: the last change holds the buffer.
                if let Some(change) = params.content_changes.into_iter().last() {
                    doc.text = change.text;
                }
                doc.version = Some(params.text_document.version);
                self.due.insert(key, Instant::now() + self.options.debounce);
            }
            DidSaveTextDocument::METHOD => {
                // An included file saved on disk changes what every open buffer reads.
                let keys: Vec<String> = self.documents.keys().cloned().collect();
                let at = Instant::now() + self.options.debounce;
                for key in keys {
                    self.due.entry(key).or_insert(at);
                }
            }
            DidCloseTextDocument::METHOD => {
                let Ok(params) = note
                    .extract::<lsp_types::DidCloseTextDocumentParams>(DidCloseTextDocument::METHOD)
                else {
                    return;
                };
                let key = params.text_document.uri.as_str().to_string();
                self.due.remove(&key);
                if let Some(doc) = self.documents.remove(&key) {
                    for other in doc.published {
                        if let Ok(uri) = Uri::from_str(&other) {
                            self.send(publish(uri, Vec::new(), None));
                        }
                    }
                    self.send(publish(params.text_document.uri, Vec::new(), None));
                }
            }
            _ => {}
        }
    }

    fn request(&mut self, request: Request) {
        let id = request.id.clone();
        let result = match request.method.as_str() {
            HoverRequest::METHOD => self.hover(request),
            GotoDefinition::METHOD => self.definition(request),
            DocumentSymbolRequest::METHOD => self.symbols(request),
            CodeActionRequest::METHOD => self.code_actions(request),
            _ => {
                self.send(Message::Response(Response::new_err(
                    id,
                    lsp_server::ErrorCode::MethodNotFound as i32,
                    format!("kickback does not answer {}", request.method),
                )));
                return;
            }
        };
        let response = match result {
            Ok(value) => Response::new_ok(id, value),
            Err(message) => {
                Response::new_err(id, lsp_server::ErrorCode::InvalidParams as i32, message)
            }
        };
        self.send(Message::Response(response));
    }

    fn checked(&self, uri: &Uri) -> Option<&BufferCheck> {
        self.documents.get(uri.as_str())?.checked.as_ref()
    }

    fn hover(&self, request: Request) -> Result<serde_json::Value, String> {
        let (_, params) = extract::<HoverRequest>(request)?;
        let at = params.text_document_position_params;
        let answer = self
            .checked(&at.text_document.uri)
            .and_then(|c| features::hover(c, at.position))
            .map(|(text, range)| Hover {
                contents: HoverContents::Markup(MarkupContent {
                    kind: MarkupKind::Markdown,
                    value: text,
                }),
                range: Some(range),
            });
        Ok(serde_json::to_value(answer).unwrap_or_default())
    }

    fn definition(&self, request: Request) -> Result<serde_json::Value, String> {
        let (_, params) = extract::<GotoDefinition>(request)?;
        let at = params.text_document_position_params;
        let uri = at.text_document.uri;
        let answer = self
            .checked(&uri)
            .and_then(|c| features::definition(c, at.position, &uri))
            .map(GotoDefinitionResponse::Scalar);
        Ok(serde_json::to_value(answer).unwrap_or_default())
    }

    fn symbols(&self, request: Request) -> Result<serde_json::Value, String> {
        let (_, params) = extract::<DocumentSymbolRequest>(request)?;
        let answer = self
            .checked(&params.text_document.uri)
            .map(|c| DocumentSymbolResponse::Nested(features::symbols(c)));
        Ok(serde_json::to_value(answer).unwrap_or_default())
    }

    fn code_actions(&self, request: Request) -> Result<serde_json::Value, String> {
        let (_, params) = extract::<CodeActionRequest>(request)?;
        let uri = params.text_document.uri;
        let lines = (params.range.start.line, params.range.end.line);
        let pages = self.pages.clone();
        let link = |rule: &str| page_link(pages.as_deref(), rule);
        let actions: Vec<CodeActionOrCommand> = self
            .checked(&uri)
            .map(|c| features::code_actions(c, lines, &uri, &link))
            .unwrap_or_default()
            .into_iter()
            .map(CodeActionOrCommand::CodeAction)
            .collect();
        Ok(serde_json::to_value(actions).unwrap_or_default())
    }
}

fn extract<R: lsp_types::request::Request>(
    request: Request,
) -> Result<(RequestId, R::Params), String> {
    request.extract(R::METHOD).map_err(|e| match e {
        ExtractError::JsonError { error, .. } => format!("unreadable parameters: {error}"),
        ExtractError::MethodMismatch(r) => format!("unexpected method {}", r.method),
    })
}

fn publish(uri: Uri, diagnostics: Vec<lsp_types::Diagnostic>, version: Option<i32>) -> Message {
    let params = PublishDiagnosticsParams {
        uri,
        diagnostics,
        version,
    };
    Message::Notification(Notification::new(
        PublishDiagnostics::METHOD.to_string(),
        params,
    ))
}

/// The rule's page as a file the editor can open, written on first use.
fn page_link(folder: Option<&std::path::Path>, rule: &str) -> Option<Uri> {
    let rule = crate::rules::find(rule)?;
    let path = folder?.join(format!("{}.md", rule.id));
    let current = std::fs::read_to_string(&path).ok();
    if current.as_deref() != Some(rule.page) {
        std::fs::write(&path, rule.page).ok()?;
    }
    convert::uri_of(&path)
}
