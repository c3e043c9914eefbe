//! Prints runnel's built-in land-cover table (TR-55 Tables 2-2a to 2-2d)
//! and the sheet-flow and shallow-flow surfaces as Markdown, for the README.
//!
//! `cargo run --example cover_table`

fn main() {
    println!("| `land` key | table | cover | CN for soil A / B / C / D |\n|---|---|---|---|");
    for c in runnel::methods::cover::COVERS {
        let cn: Vec<String> =
            c.cn.iter()
                .map(|v| v.map(|x| format!("{x:.0}")).unwrap_or_else(|| "-".into()))
                .collect();
        println!(
            "| `{}` | {} | {} | {} |",
            c.key,
            c.table.trim_start_matches("TR-55 "),
            c.description,
            cn.join(" / ")
        );
    }
    println!("\n| sheet-flow `n` name | Manning n |\n|---|---:|");
    for s in runnel::methods::cover::SHEET_SURFACES {
        println!("| `{}` | {} |", s.name, s.n);
    }
    println!("\n| shallow-flow `surface` | k in V = k s^0.5 (ft/s) |\n|---|---:|");
    for s in runnel::methods::cover::SHALLOW_SURFACES {
        println!("| `{}` | {} |", s.name, s.k_fps);
    }
}
