//! Typography of numbers and units for the coefficient sheet (HTML and Markdown): unit symbols
//! (`kg·m²`, not `kg*m^2`), real minus signs, p-values that underflowed shown as a bound, and
//! never a `NaN` on the page.
//!
//! The machine-readable outputs (JSON, the terminal table) keep the ASCII unit strings of
//! [`crate::model`] and [`crate::physical`]; this module only decides how a reader sees them, so
//! a new damping term with its own unit string is typeset without a change here.

/// The smallest p-value printed as a number; a computed p below it (the upper-tail integral
/// underflows near 1e-308) is shown as the bound `< 1e-300`.
pub const P_FLOOR: f64 = 1e-300;

/// An ASCII unit string typeset with symbols: `*` becomes the dot operator `·`, `^2`, `^3` and
/// `^-1` become superscripts, `deg` the degree sign. Unknown text passes through unchanged.
pub fn unit(ascii: &str) -> String {
    let mut out = String::with_capacity(ascii.len() + 4);
    let mut chars = ascii.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '*' => out.push('·'),
            '^' => {
                let mut exp = String::new();
                while let Some(&d) = chars.peek() {
                    if d.is_ascii_digit() || (d == '-' && exp.is_empty()) {
                        exp.push(d);
                        chars.next();
                    } else {
                        break;
                    }
                }
                if exp.is_empty() {
                    out.push('^');
                }
                for d in exp.chars() {
                    out.push(superscript(d));
                }
            }
            c => out.push(c),
        }
    }
    out.replace("deg", "°")
}

fn superscript(d: char) -> char {
    match d {
        '0' => '⁰',
        '1' => '¹',
        '2' => '²',
        '3' => '³',
        '4' => '⁴',
        '5' => '⁵',
        '6' => '⁶',
        '7' => '⁷',
        '8' => '⁸',
        '9' => '⁹',
        '-' => '⁻',
        other => other,
    }
}

/// A formatted number with its hyphen-minus signs (leading and in exponents) replaced by the
/// minus sign U+2212.
pub fn minus(number: &str) -> String {
    number.replace('-', "−")
}

/// A number for the page: `sig` significant digits with real minus signs, or "not available"
/// when it is not finite (a quantity that could not be computed says so instead of `NaN`).
pub fn num(v: f64, sig: usize) -> String {
    if v.is_finite() { minus(&digits(v, sig)) } else { "not available".into() }
}

/// The one rounding routine: `v` with `sig` significant digits in ASCII (hyphen-minus), in
/// exponent form below 1e-3 and from 1e6 on. [`num`] is what a reader sees; this is for text
/// other programs read back.
pub fn digits(v: f64, sig: usize) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    if v == 0.0 {
        return "0".into();
    }
    let mag = v.abs().log10().floor() as i32;
    if !(-3..6).contains(&mag) {
        return format!("{:.*e}", sig.saturating_sub(1), v);
    }
    let decimals = (sig as i32 - 1 - mag).max(0) as usize;
    format!("{v:.decimals$}")
}

/// Significant digits to show for `value` so that its uncertainty `half` keeps two.
pub fn sig_for(value: f64, half: f64) -> usize {
    if !(half.is_finite() && half > 0.0 && value != 0.0) {
        return 6;
    }
    let d = value.abs().log10().floor() - half.log10().floor() + 2.0;
    d.clamp(2.0, 12.0) as usize
}

/// A p-value for the page: three significant digits, `< 1e-300` when it underflowed, "not
/// available" when it could not be computed. Never `0`, never `NaN`.
pub fn p_value(p: f64) -> String {
    if !p.is_finite() || p < 0.0 {
        "not available".into()
    } else if p < P_FLOOR {
        format!("< {}", minus("1e-300"))
    } else {
        num(p, 3)
    }
}

/// Markdown-style inline code (`` `x` ``) in a plain message turned into HTML `<code>x</code>`,
/// the rest escaped; an unpaired backtick is dropped, so no raw Markdown reaches the page; a
/// `NaN` in the message reads "not available".
pub fn code_spans_html(text: &str) -> String {
    // A figure that could not be computed reads "not available", never `NaN`.
    let text = text.replace("NaN", "not available");
    let parts: Vec<&str> = text.split('`').collect();
    let paired = parts.len() % 2 == 1;
    let mut out = String::new();
    for (i, part) in parts.iter().enumerate() {
        let inside = i % 2 == 1 && (paired || i + 1 < parts.len());
        if inside {
            out.push_str("<code>");
            out.push_str(&crate::report::sheet::esc(part));
            out.push_str("</code>");
        } else {
            out.push_str(&crate::report::sheet::esc(part));
        }
    }
    out
}

/// Format a value and its uncertainty alike: the uncertainty to two significant digits and the
/// value to the same decimal place (JCGM 100:2008 §7.2.6 [memory; common practice]). Returns
/// (value, uncertainty) strings; falls back to scientific notation for very large or small numbers.
pub fn format_pair(value: f64, u: f64) -> (String, String) {
    if !value.is_finite() {
        return (format!("{value}"), format!("{u}"));
    }
    if !(u.is_finite() && u > 0.0) {
        return (format!("{value:.6e}"), if u == 0.0 { "0".into() } else { format!("{u}") });
    }
    let e = u.log10().floor() as i32;
    let decimals = 1 - e;
    if (0..=9).contains(&decimals) && value.abs() < 1e7 {
        let d = decimals as usize;
        (format!("{value:.d$}"), format!("{u:.d$}"))
    } else {
        let digits = (value.abs().log10().floor() as i32 - e + 1).clamp(1, 12) as usize;
        (format!("{value:.digits$e}"), format!("{u:.1e}"))
    }
}
