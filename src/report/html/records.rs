//! The long-record section of `report.html`: per record and point the flow-duration figure
//! (with the control band, the allowance and the levels beyond it), the annual peaks with
//! their fitted frequency curve, and the daily maxima; per entry the record's totals.

use super::{Cell, Doc, HtmlInput, esc, num_col, text_col};
use crate::report::plot::{self, PlotError};

/// The long records, when the study has any.
pub(super) fn section(doc: &mut Doc, input: &HtmlInput<'_>) -> Result<(), PlotError> {
    if input.record_plots.is_empty() && input.record_entries.is_empty() {
        return Ok(());
    }
    let u = &input.summary.units;
    doc.section("records", "Long records");
    if !input.record_entries.is_empty() {
        doc.para(&format!(
            "{} gives each record's totals and peaks per element and condition.",
            Doc::refer("tab-record-entries")
        ));
        let rows: Vec<Vec<Cell>> = input
            .record_entries
            .iter()
            .enumerate()
            .map(|(i, e)| {
                let p = |f: &str| format!("records.{i}.{f}");
                vec![
                    Cell::Text(esc(&e.record)),
                    Cell::Text(esc(&format!("{} {}", e.kind, e.element))),
                    Cell::Text(esc(&e.condition)),
                    Doc::num(p("rain_depth"), e.rain_depth, 2),
                    Doc::num(p("runoff_depth"), e.runoff_depth, 2),
                    Doc::sig(p("peak_flow"), e.peak_flow, 4),
                    Cell::Text(esc(&e.peak_time)),
                ]
            })
            .collect();
        doc.table(
            "tab-record-entries",
            "Long records: totals over the record and the highest flow.",
            &[
                text_col("record"),
                text_col("element or point"),
                text_col("condition"),
                num_col("rain", u.depth),
                num_col("runoff", u.depth),
                num_col("peak", u.flow),
                text_col("peak at"),
            ],
            &rows,
        );
    }
    for (k, r) in input.record_plots.iter().enumerate() {
        doc.h3(&r.caption);
        let keys = [
            format!("fig-duration-{k}"),
            format!("fig-frequency-{k}"),
            format!("fig-overview-{k}"),
        ];
        let band = match &r.data.duration.control {
            Some(_) => {
                " (the shaded band is the controlled flow range, the dotted red line the baseline's time plus the tolerance, and red squares mark levels where a condition's curve, as plotted, lies beyond it; the check itself counts the times, as tabulated in the summary of checks)"
            }
            None => "",
        };
        doc.para(&format!(
            "{} shows the flow-duration curves{band}, {} the annual peaks and the fitted log-Pearson III curves, {} the daily maxima over the record.",
            Doc::refer(&keys[0]),
            Doc::refer(&keys[1]),
            Doc::refer(&keys[2])
        ));
        doc.figure(
            &keys[0],
            &plot::flow_duration_svg(&r.data.duration)?,
            &format!("Flow duration, {}.", esc(&r.caption)),
            "rec",
        );
        doc.figure(
            &keys[1],
            &plot::frequency_svg(&r.data.frequency)?,
            &format!(
                "Annual peaks and fitted frequency curves, {}.",
                esc(&r.caption)
            ),
            "rec",
        );
        doc.figure(
            &keys[2],
            &plot::overview_svg(&r.data.overview)?,
            &format!("Daily maximum flow, {}.", esc(&r.caption)),
            "rec",
        );
    }
    doc.end();
    Ok(())
}
