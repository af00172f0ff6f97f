//! The README's Examples section is the program's own output: every command
//! shown there is run, and every output line shown must appear, in order,
//! in what the program prints. A line `…` stands for any number of lines; a
//! line ending in `…` for a line that starts with the text before it.

use std::path::Path;
use std::process::Command;

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// (command line, shown output lines) for each `$ biasline …` in the section.
fn examples() -> Vec<(String, Vec<String>)> {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let start = readme.find("### Examples").expect("an Examples section");
    let rest = &readme[start..];
    let end = rest[3..].find("\n#").map_or(rest.len(), |e| e + 3);
    let mut out: Vec<(String, Vec<String>)> = Vec::new();
    for line in rest[..end].lines() {
        let Some(body) = line.strip_prefix("    ") else {
            continue;
        };
        if let Some(cmd) = body.strip_prefix("$ ") {
            out.push((cmd.to_string(), Vec::new()));
        } else if let Some((_, shown)) = out.last_mut() {
            shown.push(body.to_string());
        }
    }
    out
}

fn matches(shown: &str, actual: &str) -> bool {
    match shown.strip_suffix('…') {
        Some(head) => actual.starts_with(head.trim_end()),
        None => shown == actual,
    }
}

/// Check that `shown` appears in `actual` with its `…` elisions.
fn compare(cmd: &str, shown: &[String], actual: &str) {
    let actual: Vec<&str> = actual.lines().collect();
    let mut at = 0;
    let mut skipping = false;
    for s in shown {
        if s == "…" {
            skipping = true;
            continue;
        }
        if skipping {
            let found = actual[at..].iter().position(|a| matches(s, a));
            let k = found.unwrap_or_else(|| {
                panic!("`{cmd}`: the README shows\n  {s}\nbut the program prints no such line after line {at}:\n{}", actual.join("\n"))
            });
            at += k + 1;
        } else {
            let a = actual.get(at).copied().unwrap_or("<end of output>");
            assert!(
                matches(s, a),
                "`{cmd}`: line {} — the README shows\n  {s}\nthe program prints\n  {a}",
                at + 1
            );
            at += 1;
        }
        skipping = false;
    }
}

#[test]
fn the_readme_examples_are_what_the_program_prints() {
    // invariant: documentation shows the program's real output.
    let dir = std::env::temp_dir().join(format!("biasline-readme-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(dir.join("bin")).unwrap();
    std::os::unix::fs::symlink(env!("CARGO_BIN_EXE_biasline"), dir.join("bin/biasline")).unwrap();
    std::os::unix::fs::symlink(root().join("projects"), dir.join("projects")).unwrap();
    let path = format!(
        "{}:{}",
        dir.join("bin").display(),
        std::env::var("PATH").unwrap_or_default()
    );
    let list = examples();
    assert!(list.len() >= 5, "{list:?}");
    for (cmd, shown) in &list {
        assert!(cmd.starts_with("biasline "), "{cmd}");
        let out = Command::new("sh")
            .args(["-c", cmd])
            .current_dir(&dir)
            .env("PATH", &path)
            .output()
            .unwrap();
        let code = out.status.code();
        assert!(
            matches!(code, Some(0) | Some(1)),
            "`{cmd}` exited {code:?}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        compare(cmd, shown, &String::from_utf8_lossy(&out.stdout));
    }
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn the_readme_keys_table_names_every_shelf_key() {
    // invariant: the README's key table is the editor's own shelf (every
    // part kind's key from the descriptor table appears in it).
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let start = readme.find("| key | does |").expect("a key table");
    let table: Vec<&str> = readme[start..]
        .lines()
        .take_while(|l| l.starts_with('|'))
        .collect();
    for kind in biasline::document::PartKind::ALL {
        let key = kind.info().key;
        if key.is_empty() {
            continue;
        }
        let cell = format!("`{key}`");
        assert!(
            table.iter().any(|row| row
                .split('|')
                .nth(1)
                .is_some_and(|keys| keys.contains(&cell))),
            "the README's key table has no {cell} ({kind})"
        );
    }
}
