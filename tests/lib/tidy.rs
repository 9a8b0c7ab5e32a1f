//! Tidy checks run as tests: every source file says what it is for, and the architecture page
//! names every module file.

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
    assert!(files.len() > 20);
    for f in files {
        let text = std::fs::read_to_string(&f).unwrap();
        assert!(text.starts_with("//!"), "{} does not start with a //! module doc", f.display());
        let stem = f.file_stem().unwrap().to_string_lossy().into_owned();
        assert!(arch.contains(&stem), "docs/architecture.md does not name {}", f.display());
    }
}
