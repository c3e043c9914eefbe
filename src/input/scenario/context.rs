//! Names the element and key around a byte offset of a scenario, for
//! messages from the TOML parser (which knows only lines and columns).

/// Describes where `offset` lies: e.g. `catchment "PR-1", flow segment 2, slope`.
pub fn describe(text: &str, offset: usize) -> String {
    let mut kind: Option<String> = None;
    let mut name: Option<String> = None;
    let mut sub: Option<(String, usize)> = None;
    let mut sub_counts: Vec<(String, usize)> = Vec::new();
    let mut key = None;
    let mut pos = 0usize;
    for line in text.split_inclusive('\n') {
        let start = pos;
        pos += line.len();
        let t = line.trim();
        let at_error = offset >= start && offset < pos.max(start + 1);
        if let Some(h) = t.strip_prefix("[[").and_then(|s| s.split("]]").next()) {
            let h = h.trim();
            if let Some((parent, child)) = h.split_once('.') {
                let _ = parent;
                let n = match sub_counts.iter_mut().find(|(c, _)| c == child) {
                    Some((_, n)) => {
                        *n += 1;
                        *n
                    }
                    None => {
                        sub_counts.push((child.to_string(), 1));
                        1
                    }
                };
                sub = Some((child.to_string(), n));
            } else {
                kind = Some(h.to_string());
                name = None;
                sub = None;
                sub_counts.clear();
            }
        } else if let Some(h) = t.strip_prefix('[').and_then(|s| s.split(']').next()) {
            // a plain sub-table such as [catchment.section] keeps the element
            if !h.contains('.') {
                kind = Some(h.trim().to_string());
                name = None;
                sub = None;
            }
        } else if let Some((k, v)) = t.split_once('=') {
            let k = k.trim();
            if k == "name" && sub.is_none() {
                name = Some(v.trim().trim_matches('"').to_string());
            }
            if at_error {
                key = Some(k.to_string());
            }
        }
        if at_error || pos > offset {
            // look ahead for the element's name if it comes later in the table
            if name.is_none() && kind.is_some() {
                for l in text[pos.min(text.len())..].lines() {
                    let lt = l.trim();
                    if lt.starts_with('[') {
                        break;
                    }
                    if let Some((k, v)) = lt.split_once('=')
                        && k.trim() == "name"
                    {
                        name = Some(v.trim().trim_matches('"').to_string());
                        break;
                    }
                }
            }
            break;
        }
    }
    let mut parts = Vec::new();
    if let Some(k) = &kind {
        match &name {
            Some(n) => parts.push(format!("{k} \"{n}\"")),
            None => parts.push(k.clone()),
        }
    }
    if let Some((s, n)) = &sub {
        let word = match s.as_str() {
            "flow" => "flow segment",
            "cover" => "cover",
            "outlet" => "outlet",
            other => other,
        };
        parts.push(format!("{word} {n}"));
    }
    if let Some(k) = key {
        parts.push(k);
    }
    parts.join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_element_segment_and_key() {
        let t = "title = \"x\"\n[[catchment]]\nname = \"PR-1\"\n[[catchment.flow]]\nkind = \"sheet\"\n[[catchment.flow]]\nslope = \"x\"\n";
        let off = t.find("slope").unwrap_or(0);
        assert_eq!(
            describe(t, off),
            "catchment \"PR-1\", flow segment 2, slope"
        );
        assert_eq!(describe(t, 0), "title");
    }
}
