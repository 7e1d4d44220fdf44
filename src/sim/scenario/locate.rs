//! Where a TOML scenario went wrong: a reader's error as one line with its
//! line number, and the line a dotted key is set on.

use super::ScenarioError;

/// A TOML error as one line with its line number.
pub(super) fn parse_error(text: &str, e: &toml::de::Error) -> ScenarioError {
    let line = e.span().map(|s| text[..s.start.min(text.len())].lines().count().max(1));
    let message = e.message().trim().replace('\n', " ");
    ScenarioError { key: String::new(), line, message }
}

/// The 1-based line where a dotted key (`table.key`) is set, if found: in
/// its table, or inside an inline table on one line (`model = { l_h = ...
/// }` for `firmware.model.l_h`); failing both, the first line setting a
/// key of that name.
pub fn locate_key(text: &str, dotted: &str) -> Option<usize> {
    let key = dotted.rsplit_once('.').map_or(dotted, |(_, k)| k);
    let mut current = String::new();
    let mut fallback = None;
    for (n, raw) in text.lines().enumerate() {
        let line = raw.trim();
        if let Some(header) = line.strip_prefix('[') {
            current = header.trim_matches(|c| c == '[' || c == ']').trim().to_string();
            continue;
        }
        let Some((k, value)) = line.split_once('=') else { continue };
        let k = k.trim();
        let full = if current.is_empty() { k.to_string() } else { format!("{current}.{k}") };
        let inline = dotted
            .strip_prefix(full.as_str())
            .and_then(|rest| rest.strip_prefix('.'))
            .is_some_and(|rest| inline_table_sets(value, rest));
        if full == dotted || inline {
            return Some(n + 1);
        }
        if k == key {
            fallback.get_or_insert(n + 1);
        }
    }
    fallback
}

/// Whether an inline table's text (`{ a = 1, b = 2 }`) sets `key`.
fn inline_table_sets(value: &str, key: &str) -> bool {
    value.trim_start().starts_with('{')
        && value
            .split(['{', ',', '}'])
            .any(|item| item.split_once('=').is_some_and(|(k, _)| k.trim() == key))
}
