//! Tidy checks run as tests: every source file says what it is for, and the architecture page
//! names every source file by its path.

use std::path::{Path, PathBuf};

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

#[test]
fn every_source_file_has_a_module_doc_and_is_on_the_architecture_page() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let arch = std::fs::read_to_string(root.join("docs/architecture.md")).unwrap();
    let mut files = Vec::new();
    rust_files(&root.join("src"), &mut files);
    assert!(files.len() > 40, "{} files: is src/ where it should be?", files.len());
    for f in files {
        let text = std::fs::read_to_string(&f).unwrap();
        assert!(text.starts_with("//!"), "{} does not start with a //! module doc", f.display());
        // Matched as the whole path from the repository root, in backticks: a stem that happens
        // to occur in some other word or path does not count.
        let rel = f.strip_prefix(root).unwrap().to_string_lossy().replace('\\', "/");
        assert!(
            arch.contains(&format!("`{rel}`")),
            "docs/architecture.md does not name `{rel}` as a path"
        );
    }
}
