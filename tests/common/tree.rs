//! Folder snapshots: every entry, every file's bytes, inode and modification time,
//! so that a test can say what a run created, removed or changed.
#![allow(dead_code)] // not every test file uses every helper

use std::collections::{BTreeMap, BTreeSet};
use std::os::unix::fs::MetadataExt;
use std::path::{Path, PathBuf};

/// One entry of a folder tree.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Node {
    /// A folder and its modification time (it changes when an entry is created or
    /// removed, so a temporary file made and deleted again shows).
    Dir { mtime_ns: i128 },
    /// A regular file: bytes, inode (a rename gives a new one) and modification time.
    File {
        bytes: Vec<u8>,
        ino: u64,
        mtime_ns: i128,
    },
    /// A symbolic link and where it points (never followed).
    Link(PathBuf),
    /// Anything else (a named pipe here).
    Other(String),
}

pub fn mtime_ns(m: &std::fs::Metadata) -> i128 {
    i128::from(m.mtime()) * 1_000_000_000 + i128::from(m.mtime_nsec())
}

/// Every entry under `root` by its relative path, the root itself as ".".
pub fn snapshot(root: &Path) -> BTreeMap<String, Node> {
    fn walk(root: &Path, dir: &Path, out: &mut BTreeMap<String, Node>) {
        let mut entries: Vec<PathBuf> = std::fs::read_dir(dir)
            .expect("list a folder")
            .map(|e| e.expect("a folder entry").path())
            .collect();
        entries.sort();
        for p in entries {
            let rel = p.strip_prefix(root).unwrap().display().to_string();
            let m = std::fs::symlink_metadata(&p).expect("stat an entry");
            let ft = m.file_type();
            if ft.is_dir() {
                out.insert(
                    rel,
                    Node::Dir {
                        mtime_ns: mtime_ns(&m),
                    },
                );
                walk(root, &p, out);
            } else if ft.is_file() {
                out.insert(
                    rel,
                    Node::File {
                        bytes: std::fs::read(&p).expect("read a file"),
                        ino: m.ino(),
                        mtime_ns: mtime_ns(&m),
                    },
                );
            } else if ft.is_symlink() {
                out.insert(rel, Node::Link(std::fs::read_link(&p).unwrap()));
            } else {
                out.insert(rel, Node::Other(format!("{ft:?}")));
            }
        }
    }
    let mut out = BTreeMap::new();
    let m = std::fs::metadata(root).expect("stat the root");
    out.insert(
        ".".to_string(),
        Node::Dir {
            mtime_ns: mtime_ns(&m),
        },
    );
    walk(root, root, &mut out);
    out
}

/// The paths whose entries differ between two snapshots.
pub fn differences(before: &BTreeMap<String, Node>, after: &BTreeMap<String, Node>) -> Vec<String> {
    let keys: BTreeSet<&String> = before.keys().chain(after.keys()).collect();
    keys.into_iter()
        .filter(|k| before.get(*k) != after.get(*k))
        .map(|k| match (before.get(k), after.get(k)) {
            (None, Some(_)) => format!("{k}: created"),
            (Some(_), None) => format!("{k}: removed"),
            _ => format!("{k}: changed"),
        })
        .collect()
}
