//! Exporters: result structures to bytes. One file per format; the files
//! are written in one place (`output`).

pub mod check;
pub mod csv;
pub mod figures;
pub mod html;
pub mod markdown;
pub mod plot;
pub mod records;
pub mod storms;
pub mod structure;
pub mod summary;
pub mod table;
