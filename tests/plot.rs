//! SVG plots (feature `plot`): well-formed documents, axis labels with units, one marker per
//! equivalence point or capacity peak, no non-finite number in the output, errors (not
//! panics) for empty or unusable input.
#![cfg(feature = "plot")]

use protolyte::analysis::{CapacityCurve, Titration, TitrationPoint};
use protolyte::plot::{
    Distribution, PlotError, PlotOptions, capacity_svg, distribution, distribution_svg, titration_svg, write_svg,
};
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Recipe, Temperature, Volume};

/// A minimal XML check: every tag closes in order, attributes are quoted, and text holds no
/// bare `<` or `&` that is not an entity. Returns the element names in document order.
fn well_formed(svg: &str) -> Vec<String> {
    let mut stack: Vec<String> = Vec::new();
    let mut names = Vec::new();
    let mut rest = svg;
    assert!(svg.trim_start().starts_with("<svg"), "the document starts with <svg");
    while let Some(open) = rest.find('<') {
        let text = &rest[..open];
        check_text(text);
        let after = &rest[open + 1..];
        let close = after.find('>').expect("every tag is closed by >");
        let tag = &after[..close];
        rest = &after[close + 1..];
        if let Some(name) = tag.strip_prefix('/') {
            let top = stack.pop().expect("a closing tag has an opening one");
            assert_eq!(top, name.trim(), "tags close in order");
            continue;
        }
        let self_closing = tag.ends_with('/');
        let body = tag.trim_end_matches('/');
        let name: String = body.chars().take_while(|c| !c.is_whitespace()).collect();
        assert!(
            !name.is_empty() && name.chars().all(|c| c.is_ascii_alphanumeric() || c == ':' || c == '-'),
            "element name `{name}`"
        );
        check_attributes(&body[name.len()..]);
        names.push(name.clone());
        if !self_closing {
            stack.push(name);
        }
    }
    check_text(rest);
    assert!(stack.is_empty(), "unclosed elements: {stack:?}");
    names
}

fn check_text(text: &str) {
    for (i, _) in text.match_indices('&') {
        let ent = &text[i..];
        assert!(
            ["&lt;", "&gt;", "&amp;", "&quot;", "&apos;", "&#"]
                .iter()
                .any(|e| ent.starts_with(e)),
            "bare & in text"
        );
    }
}

fn check_attributes(mut attrs: &str) {
    loop {
        attrs = attrs.trim_start();
        if attrs.is_empty() {
            return;
        }
        let eq = attrs.find('=').expect("attribute has a value");
        let key = attrs[..eq].trim();
        assert!(
            !key.is_empty() && !key.contains(char::is_whitespace),
            "attribute name `{key}`"
        );
        let value = &attrs[eq + 1..];
        assert!(value.starts_with('"'), "attribute {key} is quoted");
        let end = value[1..].find('"').expect("attribute quote closes") + 1;
        let v = &value[1..end];
        assert!(!v.contains('<'), "no < inside attribute {key}");
        attrs = &value[end + 1..];
    }
}

/// No NaN or infinity anywhere: in text or in an attribute.
fn all_finite(svg: &str) {
    assert!(!svg.contains("NaN"), "NaN in the SVG");
    assert!(!svg.contains("inf\""), "infinity in an attribute");
    assert!(
        !svg.contains("\"inf") && !svg.contains("\"-inf"),
        "infinity in an attribute"
    );
    for line in svg.lines().filter(|l| !l.starts_with('<')) {
        assert!(
            !line.contains("inf") || line.contains("inflection"),
            "infinity in text: {line}"
        );
    }
}

fn count(svg: &str, element: &str) -> usize {
    svg.matches(&format!("<{element} ")).count()
}

fn strong_titration() -> (Titration, Vec<TitrationPoint>) {
    let cat = Catalog::builtin();
    let mut acid = Recipe::new();
    acid.add(&cat.reagent("hydrochloric acid").unwrap(), Amount::molar(0.1))
        .unwrap();
    let mut base = Recipe::new();
    base.add(&cat.reagent("sodium hydroxide").unwrap(), Amount::molar(0.1))
        .unwrap();
    let t = Titration::new(&acid, Volume::milliliters(25.0), &base, &Conditions::default()).unwrap();
    let curve = t.curve_uniform(Volume::milliliters(50.0), 201).unwrap();
    (t, curve)
}

fn diprotic_titration() -> (Titration, Vec<TitrationPoint>) {
    let cat = Catalog::builtin();
    let mut acid = Recipe::new();
    acid.add(&cat.reagent("phosphoric acid").unwrap(), Amount::molar(0.05))
        .unwrap();
    let mut base = Recipe::new();
    base.add(&cat.reagent("sodium hydroxide").unwrap(), Amount::molar(0.1))
        .unwrap();
    let t = Titration::new(&acid, Volume::milliliters(20.0), &base, &Conditions::default()).unwrap();
    let curve = t.curve_uniform(Volume::milliliters(25.0), 151).unwrap();
    (t, curve)
}

#[test]
fn titration_plot_is_well_formed_with_labelled_axes() {
    let (t, curve) = strong_titration();
    let eps = t.equivalence_points().unwrap();
    let svg = titration_svg(&curve, &eps, &PlotOptions::new().title("HCl & NaOH <demo>")).unwrap();
    let names = well_formed(&svg);
    assert_eq!(names[0], "svg");
    assert!(names.iter().any(|n| n == "polyline"));
    for label in ["titrant volume / mL", "pH", "dpH/dV / mL⁻¹"] {
        assert!(svg.contains(label), "axis label `{label}`");
    }
    // The title is escaped, not injected.
    assert!(svg.contains("HCl &amp; NaOH &lt;demo&gt;"));
    all_finite(&svg);
}

#[test]
fn one_marker_and_label_per_equivalence_point() {
    for (t, curve) in [strong_titration(), diprotic_titration()] {
        let eps = t.equivalence_points().unwrap();
        let end = curve.last().unwrap().volume_ml;
        let inside: Vec<_> = eps.iter().filter(|e| e.volume_ml <= end).collect();
        assert!(!inside.is_empty());
        let svg = titration_svg(&curve, &eps, &PlotOptions::new()).unwrap();
        // One circle per point in range, plus one legend circle per kind shown (usable, weak).
        let kinds = usize::from(inside.iter().any(|e| e.usable())) + usize::from(inside.iter().any(|e| !e.usable()));
        assert_eq!(count(&svg, "circle"), inside.len() + kinds);
        for k in 1..=inside.len() {
            assert_eq!(svg.matches(&format!("EP{k}:")).count(), 1, "label EP{k}");
        }
        assert!(!svg.contains(&format!("EP{}:", inside.len() + 1)));
        well_formed(&svg);
        all_finite(&svg);
    }
}

#[test]
fn equivalence_points_outside_the_curve_are_not_marked() {
    let (t, curve) = strong_titration();
    let eps = t.equivalence_points().unwrap();
    // The first 20 mL only: the point at 25 mL lies beyond it.
    let short: Vec<_> = curve.iter().filter(|p| p.volume_ml <= 20.0).cloned().collect();
    let svg = titration_svg(&short, &eps, &PlotOptions::new()).unwrap();
    assert_eq!(count(&svg, "circle"), 0);
    assert!(!svg.contains("EP1:"));
}

#[test]
fn non_finite_points_are_left_out() {
    let (t, mut curve) = strong_titration();
    curve[10].ph = f64::NAN;
    curve[20].dph_dv_per_ml = f64::INFINITY;
    curve[30].volume_ml = f64::NEG_INFINITY;
    let mut eps = t.equivalence_points().unwrap();
    let mut bad = eps[0].clone();
    bad.volume_ml = f64::NAN;
    eps.push(bad);
    let svg = titration_svg(&curve, &eps, &PlotOptions::new()).unwrap();
    well_formed(&svg);
    all_finite(&svg);
    assert!(!svg.contains("EP2:"));
}

#[test]
fn empty_or_unusable_data_is_an_error() {
    let (t, curve) = strong_titration();
    let eps = t.equivalence_points().unwrap();
    assert!(matches!(
        titration_svg(&[], &eps, &PlotOptions::new()),
        Err(PlotError::NoData(_))
    ));
    assert!(matches!(
        titration_svg(&curve[..1], &eps, &PlotOptions::new()),
        Err(PlotError::NoData(_))
    ));
    let mut all_nan = curve.clone();
    for p in &mut all_nan {
        p.ph = f64::NAN;
    }
    assert!(matches!(
        titration_svg(&all_nan, &eps, &PlotOptions::new()),
        Err(PlotError::NoData(_))
    ));
    assert!(matches!(
        capacity_svg(&[], &[], &PlotOptions::new()),
        Err(PlotError::NoData(_))
    ));
    let empty = Distribution {
        ph: vec![],
        families: vec![],
    };
    assert!(matches!(
        distribution_svg(&empty, &PlotOptions::new()),
        Err(PlotError::NoData(_))
    ));
    // Options out of range.
    assert!(matches!(
        titration_svg(&curve, &eps, &PlotOptions::new().size(10, 10)),
        Err(PlotError::InvalidOption { .. })
    ));
    // A recipe with no acid–base family has no distribution.
    let cat = Catalog::builtin();
    let mut salt = Recipe::new();
    salt.add(&cat.reagent("sodium chloride").unwrap(), Amount::millimolar(10.0))
        .unwrap();
    assert!(matches!(
        distribution(&salt, &Conditions::default(), 2.0, 12.0, 11),
        Err(PlotError::NoData(_))
    ));
    let mut acid = Recipe::new();
    acid.add(&cat.reagent("acetic acid").unwrap(), Amount::millimolar(10.0))
        .unwrap();
    assert!(distribution(&acid, &Conditions::default(), 2.0, 12.0, 1).is_err());
    assert!(distribution(&acid, &Conditions::default(), f64::NAN, 12.0, 11).is_err());
    // Errors have messages a person can read.
    let e = titration_svg(&[], &eps, &PlotOptions::new()).unwrap_err();
    assert!(e.to_string().contains("nothing to plot"));
}

#[test]
fn distribution_fractions_come_from_the_solver() {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("phosphoric acid").unwrap(), Amount::millimolar(10.0))
        .unwrap()
        .add(&cat.reagent("acetic acid").unwrap(), Amount::millimolar(5.0))
        .unwrap();
    let ideal = Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal);
    let d = distribution(&r, &ideal, 1.0, 13.0, 49).unwrap();
    assert_eq!(d.ph.len(), 49);
    assert_eq!(d.families.len(), 2);
    for (i, ph) in d.ph.iter().enumerate() {
        assert!((ph - (1.0 + 0.25 * i as f64)).abs() < 1e-6, "point {i} at pH {ph}");
        for f in &d.families {
            // The fractions of a family sum to 1 (its mass balance; common practice).
            let sum: f64 = f.fractions.iter().map(|s| s[i]).sum();
            assert!((sum - 1.0).abs() < 1e-9, "{} sums to {sum}", f.family);
        }
    }
    let phosphate = d.families.iter().find(|f| f.family == "phosphate").unwrap();
    assert_eq!(phosphate.forms, ["H₃PO₄", "H₂PO₄⁻", "HPO₄²⁻", "PO₄³⁻"]);
    // Each form, at a pH well inside its own range, agrees with a direct solve at that pH.
    let solved = {
        let mut s = r.clone();
        s.add(&cat.reagent("sodium hydroxide").unwrap(), Amount::millimolar(0.0))
            .unwrap();
        s
    };
    let eq = solved.compile(&ideal).unwrap().solve().unwrap();
    let i = d.ph.iter().position(|p| (p - eq.ph()).abs() < 0.13).unwrap();
    let direct = eq.family("phosphate").unwrap();
    // The sweep point nearest the solution's own pH holds a similar split.
    assert!((phosphate.fractions[0][i] - direct.fractions[3]).abs() < 0.15);

    let svg = distribution_svg(&d, &PlotOptions::new().mark_ph(7.2)).unwrap();
    well_formed(&svg);
    all_finite(&svg);
    for label in ["pH", "fraction of total", "phosphate", "acetate", "H₂PO₄⁻", "pH 7.20"] {
        assert!(svg.contains(label), "`{label}` in the diagram");
    }
}

#[test]
fn capacity_plot_marks_each_peak() {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("phosphoric acid").unwrap(), Amount::millimolar(50.0))
        .unwrap();
    let c = CapacityCurve::new(&r, &Conditions::default()).unwrap();
    let sweep = c.sweep(1.0, 13.0, 121).unwrap();
    let peaks = c.peaks(1.0, 13.0).unwrap();
    assert!(!peaks.is_empty());
    let svg = capacity_svg(&sweep, &peaks, &PlotOptions::new().title("phosphate").mark_ph(7.0)).unwrap();
    well_formed(&svg);
    all_finite(&svg);
    assert!(svg.contains("pH") && svg.contains("β / (m"));
    // One triangle per peak plus the legend's.
    assert_eq!(count(&svg, "polygon"), peaks.len() + 1);
    // β in mol/kg per pH for a concentrated buffer; mmol below 0.1.
    let mut strong = Recipe::new();
    strong
        .add(&cat.reagent("acetic acid").unwrap(), Amount::molar(1.0))
        .unwrap()
        .add(&cat.reagent("sodium acetate").unwrap(), Amount::molar(1.0))
        .unwrap();
    let c = CapacityCurve::new(&strong, &Conditions::default()).unwrap();
    let svg = capacity_svg(&c.sweep(3.5, 6.0, 26).unwrap(), &[], &PlotOptions::new()).unwrap();
    assert!(svg.contains("β / (mol kg⁻¹ pH⁻¹)"));
    assert_eq!(count(&svg, "polygon"), 0);
}

#[test]
fn write_svg_writes_the_file_and_reports_failures() {
    let (t, curve) = strong_titration();
    let svg = titration_svg(&curve, &t.equivalence_points().unwrap(), &PlotOptions::new()).unwrap();
    let dir = std::env::temp_dir().join(format!("protolyte-plot-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("curve.svg");
    write_svg(&path, &svg).unwrap();
    assert_eq!(std::fs::read_to_string(&path).unwrap(), svg);
    std::fs::remove_dir_all(&dir).unwrap();
    let e = write_svg(dir.join("missing/dir/curve.svg"), &svg).unwrap_err();
    assert!(matches!(e, PlotError::Write { .. }));
    assert!(e.to_string().contains("curve.svg"));
}

#[test]
fn size_options_are_honoured() {
    let (t, curve) = strong_titration();
    let eps = t.equivalence_points().unwrap();
    let svg = titration_svg(&curve, &eps, &PlotOptions::new().size(640, 400)).unwrap();
    assert!(svg.starts_with("<svg width=\"640\""));
}

#[test]
fn one_call_plots_from_a_titration_or_a_recipe() {
    let cat = Catalog::builtin();
    let mut r = Recipe::new();
    r.add(&cat.reagent("acetic acid").unwrap(), Amount::millimolar(20.0))
        .unwrap()
        .add(&cat.reagent("sodium acetate").unwrap(), Amount::millimolar(20.0))
        .unwrap();
    let c = Conditions::default();
    let own = r.compile(&c).unwrap().solve().unwrap().ph();
    let svg = protolyte::plot::distribution_plot(&r, &c, &PlotOptions::new()).unwrap();
    well_formed(&svg);
    assert!(svg.contains(&format!("pH {own:.2}")), "the solution's own pH is marked");
    let svg = protolyte::plot::capacity_plot(&r, &c, &PlotOptions::new().mark_ph(5.0)).unwrap();
    well_formed(&svg);
    assert!(svg.contains("pH 5.00"));
    assert!(matches!(
        protolyte::plot::capacity_plot(&r, &c, &PlotOptions::new().size(5000, 500)),
        Err(PlotError::InvalidOption { .. })
    ));
    let (t, _) = diprotic_titration();
    let svg = protolyte::plot::titration_plot(&t, Volume::milliliters(25.0), &PlotOptions::new()).unwrap();
    well_formed(&svg);
    all_finite(&svg);
    assert!(svg.contains("EP1:") && svg.contains("EP2:"));
}

#[test]
fn a_title_is_text_not_a_number() {
    // "NaNO3" holds the letters N, a, N: only attribute values are checked for non-finite numbers.
    let (t, curve) = strong_titration();
    let eps = t.equivalence_points().unwrap();
    let svg = titration_svg(&curve, &eps, &PlotOptions::new().title("NaNO3 background, 0.1 M")).unwrap();
    assert!(svg.contains("NaNO3 background"));
    well_formed(&svg);
}
