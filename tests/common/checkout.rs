//! The checkout fixture that the data-source tests share: invented
//! checkout times at a library's self-service kiosks and its desk
//! (`tests/data/sources/checkout.csv`), and one plan over it whose
//! `[data]` table each test writes.

/// The fixture's rows, as CSV.
pub const CSV: &str = include_str!("../data/sources/checkout.csv");

/// The plan, with `data` as the body of its `[data]` table.
pub fn plan(data: &str) -> String {
    format!(
        r#"attest = 1
title = "Checkout time at self-service kiosks"
authors = ["Test library"]

[data]
{data}

[[exclude]]
reason = "Staff test checkouts are not patron visits"
column = "entry"
values = ["staff test"]

[[hypothesis]]
id = "H1"
claim = "Checkouts at a kiosk take fewer seconds than at the desk."
design = "independent"
outcome = "seconds"
label = "Seconds per checkout"
units = "s"
group = "point"
levels = ["kiosk", "desk"]
alternative = "less"
method = "checked"
"#
    )
}
