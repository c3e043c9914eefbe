//! `runnel validate`: every published case agrees (exit 0), the report goes only into a folder
//! runnel may write, and both files are listed in the results-folder marker.

use std::process::Command;

fn runnel(args: &[&std::ffi::OsStr]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_runnel"))
        .args(args)
        .output()
        .unwrap_or_else(|e| panic!("runnel runs: {e}"))
}

#[test]
fn validate_passes_and_writes_its_report_into_a_new_folder() {
    let tmp = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let out = tmp.path().join("checked");
    let o = runnel(&["validate".as_ref(), "--out".as_ref(), out.as_os_str()]);
    let text = String::from_utf8_lossy(&o.stdout);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{text}{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(text.contains("published cases agree"), "{text}");
    let md = std::fs::read_to_string(out.join("validation.md")).unwrap_or_default();
    let html = std::fs::read_to_string(out.join("validation.html")).unwrap_or_default();
    // Every case is a row with its source, in both files.
    for source in [
        "TR-55 (1986) Table 2-1",
        "TR-55 (1986) Table 2-2a",
        "TR-55 (1986) Table 3-1",
        "NEH 630 ch. 16 Table 16-5",
        "Bulletin 17B",
        "TR-55 (1986) Table 4-2",
        "Hawkins et al. (2002)",
        "Chow, Maidment & Mays (1988) Table 14.4.1",
        "TR-55 (1986) Example 3-1",
        "TR-55 (1986) Table F-1",
        "TR-55 (1986) Table F-2",
        "NEH 630 ch. 15 (2010) Table 15-3",
        "NEH 630 ch.16 Table 16-1",
        "Bedient, Huber & Vieux (5th ed.) Example 2-6",
        "FHWA HDS-5 (2012)",
        "FHWA HDS-5 (2001) Table 12",
        "Villemonte (1947)",
    ] {
        // Markdown keeps a plain `&` as it is; HTML escapes it.
        assert!(
            md.contains(source) && html.contains(&source.replace('&', "&amp;")),
            "{source} missing"
        );
    }
    assert!(!md.contains("**off**"));
    let marker = std::fs::read_to_string(out.join(".runnel-results")).unwrap_or_default();
    assert!(marker.lines().any(|l| l == "validation.md"));
    assert!(marker.lines().any(|l| l == "validation.html"));
}

#[test]
fn validate_refuses_a_folder_runnel_did_not_write_and_touches_nothing() {
    let tmp = tempfile::tempdir().unwrap_or_else(|e| panic!("{e}"));
    let mine = tmp.path().join("notes.txt");
    std::fs::write(&mine, "mine").unwrap_or_else(|e| panic!("{e}"));
    let o = runnel(&[
        "validate".as_ref(),
        "--out".as_ref(),
        tmp.path().as_os_str(),
    ]);
    assert_eq!(
        o.status.code(),
        Some(2),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert_eq!(std::fs::read_to_string(&mine).unwrap_or_default(), "mine");
    assert!(!tmp.path().join("validation.md").exists());
}
