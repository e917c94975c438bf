//! Writers of tables and files for people and other programs. Only this layer writes CSV.

pub mod export;
pub mod inspect;
pub mod molinfo;
pub mod pairs;
