//! Small text helpers shared by messages and reports.

/// `name` with its kind in front ("pond \"basin\""), unless the name
/// already begins with that kind ("Pond A", "Point 3"), so that no report
/// reads "Pond Pond A". `kind` is written as given (capitalise it for a
/// heading).
pub fn kind_and_name(kind: &str, name: &str) -> String {
    let first = name.split_whitespace().next().unwrap_or("");
    if first.eq_ignore_ascii_case(kind) {
        name.to_string()
    } else {
        format!("{kind} \"{name}\"")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // runnel's own wording rule, no published source
    #[test]
    fn a_name_that_already_says_its_kind_is_not_doubled() {
        assert_eq!(kind_and_name("pond", "Pond A"), "Pond A");
        assert_eq!(kind_and_name("pond", "basin"), "pond \"basin\"");
        assert_eq!(kind_and_name("point", "outfall"), "point \"outfall\"");
    }
}
