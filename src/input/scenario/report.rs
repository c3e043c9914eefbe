//! `[report]`: the project block of `report.html` (project number, client, prepared by,
//! date), free text printed as written.

use super::raw::RawScenario;
use super::{Builder, R};
use crate::model::ReportInfo;
use toml::Spanned;

/// Longest entry accepted, in characters (a project block line, not a paragraph).
pub const MAX_REPORT_TEXT_CHARS: usize = 200;

impl Builder<'_> {
    /// The `[report]` entries, each checked to be printable text of at most
    /// [`MAX_REPORT_TEXT_CHARS`] characters.
    pub(super) fn report(&self, raw: &RawScenario) -> R<ReportInfo> {
        let Some(r) = &raw.report else {
            return Ok(ReportInfo::default());
        };
        let r = r.get_ref();
        Ok(ReportInfo {
            project_number: self.report_text(r.project_number.as_ref(), "project_number")?,
            client: self.report_text(r.client.as_ref(), "client")?,
            prepared_by: self.report_text(r.prepared_by.as_ref(), "prepared_by")?,
            date: self.report_text(r.date.as_ref(), "date")?,
        })
    }

    fn report_text(&self, v: Option<&Spanned<String>>, key: &str) -> R<Option<String>> {
        let Some(v) = v else { return Ok(None) };
        let ctx = format!("report, {key}");
        let text = v.get_ref().trim();
        if text.is_empty() {
            return Err(self
                .err(&v.span(), &ctx, format!("{key} is empty"))
                .expected("text of at least one visible character")
                .hint(format!("give the {key} or leave the key out")));
        }
        if let Some(c) = text.chars().find(|c| c.is_control()) {
            return Err(self
                .err(
                    &v.span(),
                    &ctx,
                    format!("{key} holds a control character (U+{:04X})", c as u32),
                )
                .expected("one line of printable characters")
                .hint("remove the tab, line break or other invisible character"));
        }
        let n = text.chars().count();
        if n > MAX_REPORT_TEXT_CHARS {
            return Err(self
                .err(&v.span(), &ctx, format!("{key} is {n} characters long"))
                .expected(format!("at most {MAX_REPORT_TEXT_CHARS} characters"))
                .hint("the project block holds one short line per entry"));
        }
        Ok(Some(text.to_string()))
    }
}
