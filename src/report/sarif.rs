//! `--format sarif`: SARIF 2.1.0 for code-scanning services. Rule descriptors come from the
//! registry and the rule pages; files that could not be checked become tool notifications.

use super::{failures, locate, ordered};
use crate::diagnostic::Severity;
use crate::outcome::FileReport;
use crate::rules::{Rule, REGISTRY};
use crate::source::Location;
use serde_json::json;
use serde_sarif::sarif;
use std::collections::BTreeMap;

pub const SCHEMA_URI: &str = "https://json.schemastore.org/sarif-2.1.0.json";

pub fn log(reports: &[FileReport]) -> sarif::Sarif {
    let results: Vec<sarif::Result> = ordered(reports)
        .into_iter()
        .map(|entry| {
            let finding = entry.finding;
            let mut text = finding.message.clone();
            if let Some(help) = &finding.help {
                text.push_str("\nhelp: ");
                text.push_str(help);
            }
            let mut result = sarif::Result::builder()
                .message(sarif::Message::builder().text(text).build())
                .rule_id(finding.rule.clone())
                .level(level(finding.severity))
                .locations(vec![location(&entry.location, None, None)])
                .build();
            result.rule_index = REGISTRY
                .iter()
                .position(|rule| rule.id == finding.rule)
                .and_then(|i| i64::try_from(i).ok());
            let related: Vec<sarif::Location> = finding
                .involved_lines()
                .into_iter()
                .enumerate()
                .map(|(id, (span, message))| {
                    let at = locate(entry.report, span);
                    location(&at, Some(message), i64::try_from(id).ok())
                })
                .collect();
            if !related.is_empty() {
                result.related_locations = Some(related);
            }
            result.properties = properties(finding);
            result
        })
        .collect();

    let notifications: Vec<sarif::Notification> = failures(reports)
        .into_iter()
        .map(|(file, message)| {
            let at = sarif::Location::builder()
                .physical_location(
                    sarif::PhysicalLocation::builder()
                        .artifact_location(
                            sarif::ArtifactLocation::builder()
                                .uri(artifact_uri(&file))
                                .build(),
                        )
                        .build(),
                )
                .build();
            sarif::Notification::builder()
                .message(
                    sarif::Message::builder()
                        .text(format!("cannot check {file}: {message}"))
                        .build(),
                )
                .level(json!("error"))
                .locations(vec![at])
                .build()
        })
        .collect();
    let mut invocation = sarif::Invocation::builder()
        .execution_successful(notifications.is_empty())
        .build();
    if !notifications.is_empty() {
        invocation.tool_execution_notifications = Some(notifications);
    }

    let driver = sarif::ToolComponent::builder()
        .name("kickback")
        .version(env!("CARGO_PKG_VERSION"))
        .semantic_version(env!("CARGO_PKG_VERSION"))
        .rules(
            REGISTRY
                .iter()
                .map(|rule| descriptor(rule))
                .collect::<Vec<_>>(),
        )
        .build();
    let run = sarif::Run::builder()
        .tool(sarif::Tool::builder().driver(driver).build())
        .results(results)
        .invocations(vec![invocation])
        // Columns count characters, not UTF-16 units.
        .column_kind(json!("unicodeCodePoints"))
        .build();
    sarif::Sarif::builder()
        .schema(SCHEMA_URI)
        .version(json!("2.1.0"))
        .runs(vec![run])
        .build()
}

/// Pretty-printed, ending with a newline.
pub fn render(reports: &[FileReport]) -> String {
    // Generated structs with string keys: serialising cannot fail, but never panic if it did.
    let mut text = serde_json::to_string_pretty(&log(reports)).unwrap_or_else(|e| {
        json!({ "version": "2.1.0", "runs": [], "properties": { "error": e.to_string() } })
            .to_string()
    });
    text.push('\n');
    text
}

fn descriptor(rule: &Rule) -> sarif::ReportingDescriptor {
    let what = page_section(rule.page, "The fault").unwrap_or(rule.summary);
    sarif::ReportingDescriptor::builder()
        .id(rule.id)
        .name(rule.id)
        .short_description(message_string(rule.summary, None))
        .full_description(message_string(&plain(what), Some(what)))
        .help(message_string(&plain(rule.page), Some(rule.page)))
        .default_configuration(
            sarif::ReportingConfiguration::builder()
                .level(json!(rule.default_severity.as_str()))
                .build(),
        )
        .build()
}

fn message_string(text: &str, markdown: Option<&str>) -> sarif::MultiformatMessageString {
    let mut message = sarif::MultiformatMessageString::builder()
        .text(text.to_string())
        .build();
    message.markdown = markdown.map(str::to_string);
    message
}

/// The body of the `## {title}` section of a rule page, up to the next heading.
pub fn page_section<'a>(page: &'a str, title: &str) -> Option<&'a str> {
    let mut offset = 0;
    let mut start = None;
    for line in page.split_inclusive('\n') {
        let heading = line.trim_end();
        if let Some(at) = start {
            if heading.starts_with("# ") || heading.starts_with("## ") {
                return Some(page[at..offset].trim());
            }
        } else if heading
            .strip_prefix("## ")
            .is_some_and(|name| name.trim().eq_ignore_ascii_case(title))
        {
            start = Some(offset + line.len());
        }
        offset += line.len();
    }
    start.map(|at| page[at..].trim())
}

/// Markdown as plain text for viewers that show only `text`: emphasis and code marks dropped.
fn plain(markdown: &str) -> String {
    markdown.replace("**", "").replace('`', "")
}

fn level(severity: Severity) -> sarif::ResultLevel {
    match severity {
        Severity::Error => sarif::ResultLevel::Error,
        Severity::Warning => sarif::ResultLevel::Warning,
        Severity::Note => sarif::ResultLevel::Note,
    }
}

fn location(at: &Location, message: Option<String>, id: Option<i64>) -> sarif::Location {
    let region = sarif::Region::builder()
        .start_line(count(at.line))
        .start_column(count(at.column))
        .end_line(count(at.end_line))
        .end_column(count(at.end_column))
        .build();
    let physical = sarif::PhysicalLocation::builder()
        .artifact_location(
            sarif::ArtifactLocation::builder()
                .uri(artifact_uri(&at.file))
                .build(),
        )
        .region(region)
        .build();
    let mut location = sarif::Location::builder()
        .physical_location(physical)
        .build();
    location.message = message.map(|text| sarif::Message::builder().text(text).build());
    location.id = id;
    location
}

fn count(n: usize) -> i64 {
    i64::try_from(n).unwrap_or(i64::MAX)
}

/// The element, instance path and numbers of a finding, for programs reading the log.
fn properties(finding: &crate::diagnostic::Finding) -> Option<sarif::PropertyBag> {
    let mut extra = BTreeMap::new();
    if let Some(element) = &finding.element {
        extra.insert("element".to_string(), json!(element));
    }
    if let Some(path) = &finding.instance_path {
        extra.insert("instancePath".to_string(), json!(path));
    }
    if !finding.values.is_empty() {
        let values: serde_json::Map<String, serde_json::Value> = finding
            .values
            .iter()
            .map(|q| {
                let value = if q.value.is_finite() {
                    json!(q.value)
                } else {
                    serde_json::Value::Null
                };
                (
                    q.name.clone(),
                    json!({ "value": value, "unit": q.unit, "source": q.source }),
                )
            })
            .collect();
        extra.insert("values".to_string(), serde_json::Value::Object(values));
    }
    if extra.is_empty() {
        return None;
    }
    Some(
        sarif::PropertyBag::builder()
            .additional_properties(extra)
            .build(),
    )
}

/// A file name as shown to the user turned into a URI reference: relative paths stay relative
/// (resolved against the folder the check ran in), absolute ones become `file:` URIs.
pub fn artifact_uri(name: &str) -> String {
    let slashed = name.replace('\\', "/");
    let drive = slashed.len() >= 2
        && slashed.as_bytes().get(1) == Some(&b':')
        && slashed
            .as_bytes()
            .first()
            .is_some_and(u8::is_ascii_alphabetic);
    let mut uri = String::new();
    if slashed.starts_with('/') {
        uri.push_str("file://");
    } else if drive {
        uri.push_str("file:///");
    }
    for byte in slashed.bytes() {
        let keep = byte.is_ascii_alphanumeric()
            || matches!(byte, b'-' | b'.' | b'_' | b'~' | b'/')
            || (drive && byte == b':');
        if keep {
            uri.push(char::from(byte));
        } else {
            uri.push_str(&format!("%{byte:02X}"));
        }
    }
    uri
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn uris_are_relative_or_file() {
        assert_eq!(artifact_uri("hw/drive.cir"), "hw/drive.cir");
        assert_eq!(artifact_uri("hw\\my drive.cir"), "hw/my%20drive.cir");
        assert_eq!(artifact_uri("/home/a/b.cir"), "file:///home/a/b.cir");
        assert_eq!(artifact_uri("C:\\x\\b.cir"), "file:///C:/x/b.cir");
        assert_eq!(artifact_uri("50%.cir"), "50%25.cir");
    }

    #[test]
    fn page_sections_are_found_by_title() {
        let page = "# x\n\n## The fault\n\nThe thing.\nMore.\n\n## Why\n\nBecause.\n";
        assert_eq!(page_section(page, "The fault"), Some("The thing.\nMore."));
        assert_eq!(page_section(page, "why"), Some("Because."));
        assert_eq!(page_section(page, "Missing"), None);
    }
}
