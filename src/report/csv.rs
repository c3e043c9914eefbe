//! One CSV of hydrographs per storm: `time_h`, then one column per condition
//! and element (pond outflow, stage and storage), then the points; units in
//! every header.

use crate::engine::network::StormResult;
use crate::model::{ElementKind, Study};
use crate::report::summary::Out;
use crate::util::units::Quantity;
use std::fmt::Write;

/// The CSV text of one storm's hydrographs.
pub fn storm_csv(study: &Study, s: &StormResult) -> String {
    let o = Out(study.units);
    let fu = o.unit(Quantity::Flow);
    let lu = o.unit(Quantity::Length);
    let vu = o.unit(Quantity::Volume);
    let du = o.unit(Quantity::Depth);
    let mut headers = vec!["time_h".to_string(), format!("rain [{du}]")];
    let mut cols: Vec<Vec<f64>> = Vec::new();
    let mut rain = vec![0.0];
    rain.extend(s.rain_in.iter().map(|r| o.depth(*r)));
    cols.push(rain);
    for c in &s.conditions {
        let cname = &study.conditions[c.condition];
        for (i, er) in c.elements.iter().enumerate() {
            let Some(er) = er else { continue };
            let e = &study.elements[i];
            match &e.kind {
                ElementKind::Pond(_) => {
                    if let Some(p) = &er.pond {
                        headers.push(format!("{cname}/{} inflow [{fu}]", e.name));
                        cols.push(p.inflow_cfs.iter().map(|v| o.flow(*v)).collect());
                        headers.push(format!("{cname}/{} outflow [{fu}]", e.name));
                        cols.push(er.outflow_cfs.iter().map(|v| o.flow(*v)).collect());
                        headers.push(format!("{cname}/{} stage [{lu}]", e.name));
                        cols.push(p.stage_ft.iter().map(|v| o.length(*v)).collect());
                        headers.push(format!("{cname}/{} storage [{vu}]", e.name));
                        cols.push(p.storage_ft3.iter().map(|v| o.volume(*v)).collect());
                    }
                }
                _ => {
                    headers.push(format!("{cname}/{} flow [{fu}]", e.name));
                    cols.push(er.outflow_cfs.iter().map(|v| o.flow(*v)).collect());
                }
            }
        }
        for (pi, q) in c.points.iter().enumerate() {
            headers.push(format!("{cname}/{} flow [{fu}]", study.points[pi].name));
            cols.push(q.iter().map(|v| o.flow(*v)).collect());
        }
    }
    let mut out = String::new();
    out.push_str(
        &headers
            .iter()
            .map(|h| quote(h))
            .collect::<Vec<_>>()
            .join(","),
    );
    out.push('\n');
    let n = s.len();
    for k in 0..n {
        let _ = write!(out, "{:.4}", k as f64 * s.step_h);
        for c in &cols {
            let v = c.get(k).copied().unwrap_or(0.0);
            let _ = write!(out, ",{}", num(v));
        }
        out.push('\n');
    }
    out
}

fn num(v: f64) -> String {
    if v == 0.0 {
        "0".into()
    } else if v.abs() >= 1000.0 {
        format!("{v:.2}")
    } else {
        format!("{v:.5}")
    }
}

fn quote(h: &str) -> String {
    if h.contains(',') || h.contains('"') {
        format!("\"{}\"", h.replace('"', "\"\""))
    } else {
        h.to_string()
    }
}
