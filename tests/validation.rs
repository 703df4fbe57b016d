//! `docs/validation.md` is the generated validation table (`cargo run --release
//! --example validation`). This fast check keeps it from going stale silently: it must
//! exist, say how it was generated, and list every shipped lattice file with its
//! reference.

use std::path::Path;

#[test]
fn validation_table_lists_every_shipped_lattice() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let doc = std::fs::read_to_string(root.join("docs/validation.md"))
        .expect("docs/validation.md is missing: run `cargo run --release --example validation`");
    assert!(
        doc.contains("cargo run --release --example validation"),
        "the header must say how to regenerate it"
    );
    let mut stems: Vec<String> = std::fs::read_dir(root.join("lattices"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .map(|p| p.file_stem().unwrap().to_string_lossy().into_owned())
        .collect();
    stems.sort();
    assert!(
        stems.len() >= 10,
        "expected the shipped lattices, found {stems:?}"
    );
    let missing: Vec<&String> = stems
        .iter()
        .filter(|s| !doc.contains(&format!("lattices/{s}.yaml")))
        .collect();
    assert!(
        missing.is_empty(),
        "docs/validation.md does not list {missing:?}: regenerate it with `cargo run --release --example validation`"
    );
    // Files it lists that no longer exist also mean it is stale.
    for line in doc.lines().filter(|l| l.starts_with("### ")) {
        let Some(start) = line.find("(`lattices/") else {
            continue;
        };
        let file = line[start + 2..].trim_end_matches(['`', ')']);
        assert!(
            root.join(file).exists(),
            "docs/validation.md lists {file}, which no longer exists: regenerate it"
        );
    }
    // Every level of every shipped file has its row (a level added without regenerating
    // the table is caught here).
    for stem in &stems {
        let path = root.join("lattices").join(format!("{stem}.yaml"));
        let lattice = rungs::lattice::Lattice::from_file(&path).unwrap();
        let section = doc
            .split("\n### ")
            .find(|s| s.contains(&format!("(`lattices/{stem}.yaml`)")))
            .unwrap_or_else(|| panic!("docs/validation.md has no section for {stem}"));
        for level in rungs::lattice::Level::names(&lattice) {
            assert!(
                section.contains(&format!("\n| {level} |")),
                "docs/validation.md lacks level `{level}` of {stem}: regenerate it"
            );
        }
    }
    // Onsager's exact Tc on the square lattice (Onsager 1944, Phys. Rev. 65, 117) is the
    // reference of its row.
    assert!(
        doc.contains("2.269185"),
        "the square lattice's reference Tc is missing"
    );
}
