//! Errors of the campaign layer, each naming the file (and line or key) concerned.

use std::path::PathBuf;

use thiserror::Error;

use crate::fragments::FragmentError;

#[derive(Debug, Error)]
pub enum CampaignError {
    #[error("{}: cannot read workflow: {source}", .path.display())]
    ReadWorkflow {
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("{}: {message}", .path.display())]
    Workflow { path: PathBuf, message: String },
    #[error("fragment library has {} problem(s):\n{}", .0.len(), .0.iter().map(|e| format!("  {e}")).collect::<Vec<_>>().join("\n"))]
    Fragments(Vec<FragmentError>),
    #[error("{}: not a SQLite database (or damaged): {detail}", .path.display())]
    NotADatabase { path: PathBuf, detail: String },
    #[error("{}: a SQLite database, but not a lumisift campaign store ({detail}); refusing to touch it", .path.display())]
    ForeignDatabase { path: PathBuf, detail: String },
    #[error("{}: campaign store schema version {found} is newer than this lumisift supports ({supported})", .path.display())]
    SchemaTooNew {
        path: PathBuf,
        found: u32,
        supported: u32,
    },
    #[error("{}: database error: {source}", .path.display())]
    Sqlite {
        path: PathBuf,
        source: rusqlite::Error,
    },
    #[error("{0}")]
    Other(String),
}

impl CampaignError {
    pub fn sqlite(path: &std::path::Path) -> impl Fn(rusqlite::Error) -> CampaignError + '_ {
        move |source| CampaignError::Sqlite {
            path: path.to_path_buf(),
            source,
        }
    }
}
