//! Measured titrations: CSV reading, electrode calibration, smoothed derivative and Gran
//! endpoints, content and its uncertainty, and a round trip (simulate noisy curves, recover
//! the content, check the coverage of the stated interval).

use protolyte::analysis::GranFunction;
use protolyte::analysis::Titration;
use protolyte::analysis::measured::MeasuredError;
use protolyte::analysis::measured::calibration::{BufferReading, ElectrodeCalibration, nernst_slope_mv};
use protolyte::analysis::measured::content::{ContentInputs, Sample, content};
use protolyte::analysis::measured::csv::{Column, CsvLayout, Signal, VolumeUnit, read_csv};
use protolyte::analysis::measured::derivative::smoothed_endpoints;
use protolyte::analysis::measured::gran::gran_both_sides;
use protolyte::{ActivityModel, Amount, Catalog, Conditions, Protolyte, Reagent, Recipe, Temperature, Volume};

fn ideal() -> Conditions {
    Conditions::new(Temperature::celsius(25.0), ActivityModel::Ideal)
}

/// xorshift64* with Box–Muller normals, fixed seed.
struct Noise(u64);

impl Noise {
    fn uniform(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        ((self.0.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
    fn normal(&mut self) -> f64 {
        let (u, v) = (self.uniform(), self.uniform());
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}

#[test]
fn csv_errors_name_the_line_and_layouts_are_honoured() {
    let l = CsvLayout::default();
    // A bad number, a missing field, a volume that goes back, an unclosed quote.
    for (text, line) in [
        ("v,ph\n1,4\n2,four\n", 3),
        ("# comment\nv,ph\n1,4\n\n2\n", 5),
        ("1,4\n2,5\n1.5,6\n", 3),
        ("v,ph\n\"1,4\n", 2),
    ] {
        match read_csv(text, &l) {
            Err(MeasuredError::Line { line: got, .. }) => assert_eq!(got, line, "{text:?}"), // expected line numbers counted in the invented texts above, by construction
            other => panic!("{text:?}: {other:?}"),
        }
    }
    // Columns by name, litres, semicolons with decimal commas, a third column ignored.
    let text = "time;V/L;pH\n0;0,0010;3,10\n5;0,0020;3,40\n";
    let layout = CsvLayout {
        volume: Column::Name("v/l".into()),
        signal: Column::Name("pH".into()),
        volume_unit: VolumeUnit::Liters,
        delimiter: ';',
        ..CsvLayout::default()
    };
    let c = read_csv(text, &layout).unwrap();
    assert_eq!(c.points, vec![(1.0, 3.1), (2.0, 3.4)]); // the values written in the invented text above, converted (same data two ways)
    // A named column that is not there.
    let bad = CsvLayout {
        signal: Column::Name("E".into()),
        ..layout.clone()
    };
    assert!(matches!(read_csv(text, &bad), Err(MeasuredError::Column { .. })));
    // Potentials are refused as pH until calibrated.
    let mv = CsvLayout {
        signal_kind: Signal::Millivolts,
        ..CsvLayout::default()
    };
    assert!(read_csv("1,100\n2,90\n", &mv).unwrap().ph_pairs().is_err());
}

#[test]
fn nernst_slope_and_temperature_compensation() {
    // ln 10·R·T/F with the CODATA 2018 exact R and F: 59.159 mV at 25 °C, 54.199 mV at 0 °C,
    // 61.540 mV at 37 °C (computed from the constants).
    for (c, s) in [(25.0, 59.159), (0.0, 54.199), (37.0, 61.540)] {
        assert!((nernst_slope_mv(Temperature::celsius(c)) - s).abs() < 1e-3, "{c} °C"); // computed from CODATA 2018 constants (above); 1e-3 mV tolerance (values given to 3 decimals)
    }
    // Three IUPAC primary buffers at 25 °C, pH 4.005, 6.865, 9.180 (Buck et al., Pure Appl.
    // Chem. 74 (2002) 2169; from memory), read by an invented electrode of 97 % slope and
    // −12 mV offset with small reading errors.
    let s = 0.97 * 59.159;
    let errors = [0.2, -0.3, 0.1];
    let b: Vec<BufferReading> = [4.005, 6.865, 9.180]
        .iter()
        .zip(errors)
        .map(|(&ph, e)| BufferReading {
            ph,
            millivolts: -12.0 - s * (ph - 7.0) + e,
        })
        .collect();
    let cal = ElectrodeCalibration::from_buffers(&b, Temperature::celsius(25.0)).unwrap();
    assert!((cal.slope_percent - 97.0).abs() < 0.1, "{}", cal.slope_percent); // recovers the invented 97 % slope (self-consistency); 0.1 tolerance for the invented reading errors
    assert!((cal.offset_mv + 12.0).abs() < 0.3, "{}", cal.offset_mv); // recovers the invented −12 mV offset (self-consistency); 0.3 mV tolerance for the invented reading errors
    let (se_slope, se_offset) = cal.standard_errors.unwrap();
    assert!(se_slope > 0.0 && se_offset > 0.0);
    assert!(cal.warnings.is_empty());
    // At 37 °C the same fraction of the larger Nernst slope converts a reading.
    let ph = cal
        .ph(
            cal.offset_mv - 2.0 * 0.01 * cal.slope_percent * 61.540,
            Temperature::celsius(37.0),
        )
        .unwrap();
    assert!((ph - 9.0).abs() < 1e-3, "{ph}"); // the reading built for pH 9 at 37 °C is read back, self-consistency; 1e-3 tolerance
    // A worn electrode (88 %) is accepted with a warning; buffers too close are refused.
    let worn: Vec<BufferReading> = [4.005, 9.180]
        .iter()
        .map(|&ph| BufferReading {
            ph,
            millivolts: -0.88 * 59.159 * (ph - 7.0),
        })
        .collect();
    let cal = ElectrodeCalibration::from_buffers(&worn, Temperature::celsius(25.0)).unwrap();
    assert_eq!(cal.warnings.len(), 1); // one warning for the invented 88 % electrode
    let close = [
        BufferReading {
            ph: 7.0,
            millivolts: 0.0,
        },
        BufferReading {
            ph: 7.1,
            millivolts: -5.9,
        },
    ];
    assert!(ElectrodeCalibration::from_buffers(&close, Temperature::celsius(25.0)).is_err());
}

/// The slope the United States Pharmacopeia states for temperature compensation: "the value
/// of k is the change in potential per unit change in pH and is theoretically
/// [0.05916 + 0.000198(t − 25)] volts at any temperature t" (USP 32–NF 27 (2009), general
/// chapter ⟨791⟩ pH; stored copy read at
/// https://drugfuture.com/Pharmacopoeia/usp32/pub/data/v32270/usp32nf27s0_c791.html).
/// The Nernst slope from R and F must agree with it from 0 to 50 °C within the chapter's
/// rounding: ±0.005 mV from 0.05916 V and ±0.0005 mV/K × |t − 25| ≤ 0.0125 mV from
/// 0.000198 V/K, 0.0175 mV in all; the tolerance is 0.02 mV.
#[test]
fn nernst_slope_follows_the_pharmacopeia() {
    for t in [0.0, 10.0, 25.0, 30.0, 37.0, 40.0, 50.0] {
        let usp_mv = 1e3 * (0.05916 + 0.000198 * (t - 25.0)); // USP ⟨791⟩ (above)
        let ours = nernst_slope_mv(Temperature::celsius(t));
        assert!((ours - usp_mv).abs() < 0.02, "{t} °C: {ours} vs {usp_mv}"); // USP ⟨791⟩ formula; 0.02 mV tolerance from its rounding (above)
    }
}

/// The ideal curve of 25 mL of a monoprotic acid (pKa `pka`, `c` mol/L) with 0.1 mol/L
/// NaOH at `volumes`.
fn curve(pka: f64, c: f64, volumes: &[f64]) -> Vec<(f64, f64)> {
    let p = Protolyte::new("test acid", &[pka], 0).unwrap();
    let mut acid = Recipe::new();
    acid.add(&Reagent::neutral_form(&p, None).unwrap(), Amount::molar(c))
        .unwrap();
    let mut base = Recipe::new();
    base.add(
        &Catalog::builtin().reagent("sodium hydroxide").unwrap(),
        Amount::molar(0.1),
    )
    .unwrap();
    let t = Titration::new(&acid, Volume::milliliters(25.0), &base, &ideal()).unwrap();
    let vs: Vec<Volume> = volumes.iter().map(|&v| Volume::milliliters(v)).collect();
    t.curve(&vs).unwrap().iter().map(|p| (p.volume_ml, p.ph)).collect()
}

fn volumes(ve: f64) -> Vec<f64> {
    let mut out = Vec::new();
    let mut v: f64 = 0.5;
    while v <= 1.5 * ve {
        out.push(v);
        v += if (ve - 1.0..ve + 1.0).contains(&v) { 0.1 } else { 0.5 };
    }
    out
}

#[test]
fn gran_lines_follow_grans_relations() {
    // Gran (Analyst 77 (1952) 661): for a weak acid titrated with strong base, v·10^-pH =
    // Ka·(Ve − v) (ideal), so the line's slope is −Ka and its intercept Ve; after the
    // endpoint (V0 + v)·10^pH = (c_b/Kw)·(v − Ve). 25 mL of 0.08 mol/L acid of pKa 4.76:
    // Ve = 20 mL.
    let data = curve(4.76, 0.08, &volumes(20.0));
    let g = gran_both_sides(&data, 25.0, 20.05).unwrap();
    let before = g.before.unwrap();
    assert_eq!(before.fit.function, GranFunction::WeakAcidBuffer);
    assert!(
        (before.fit.endpoint_ml - 20.0).abs() < 0.01, // Ve = 20 mL by construction (Gran 1952, above); 0.01 mL tolerance chosen for this test
        "{}",
        before.fit.endpoint_ml
    );
    assert!(
        (before.fit.slope / -10f64.powf(-4.76) - 1.0).abs() < 0.02, // slope −Ka (Gran 1952, above); 2 % tolerance chosen for this test
        "{}",
        before.fit.slope
    );
    let after = g.after.unwrap();
    assert_eq!(after.fit.function, GranFunction::ExcessBase);
    assert!((after.fit.endpoint_ml - 20.0).abs() < 1e-3, "{}", after.fit.endpoint_ml); // Ve = 20 mL by construction (Gran 1952, above); 1e-3 mL tolerance chosen for this test
    // Slope c_b/Kw per mL: 0.1 mol/L / 1e-14 (Kw at 25 °C, common practice) = 1e13 per L, i.e.
    // 1e13 in (mL·10^pH) per mL.
    assert!((after.fit.slope / 1e13 - 1.0).abs() < 0.02, "{}", after.fit.slope); // c_b/Kw (Gran 1952; Kw common practice, above); 2 % tolerance chosen for this test
    // A strong acid: the excess-acid function is chosen before the endpoint.
    let data = curve(-2.0, 0.08, &volumes(20.0));
    let g = gran_both_sides(&data, 25.0, 20.0).unwrap();
    assert_eq!(g.before.unwrap().fit.function, GranFunction::ExcessAcid);
}

#[test]
fn smoothed_derivative_finds_the_endpoint_in_noise() {
    // 0.01 pH noise on the curve above: the smoothed derivative endpoint lies within one
    // step (0.1 mL) of Ve = 20 mL; the plain one may be pulled by the noise.
    let mut noise = Noise(7);
    let data: Vec<(f64, f64)> = curve(4.76, 0.08, &volumes(20.0))
        .into_iter()
        .map(|(v, ph)| (v, ph + 0.01 * noise.normal()))
        .collect();
    let e = smoothed_endpoints(&data, 2, 0.5).unwrap();
    assert_eq!(e.len(), 1, "{e:?}");
    assert!((e[0].volume_ml - 20.0).abs() < 0.1, "{}", e[0].volume_ml); // within one step (0.1 mL) of Ve = 20 mL, as stated above
}

#[test]
fn round_trip_recovers_the_content_and_covers_it() {
    // Simulated curves of 25 mL of 0.0800 mol/L acetic acid-like acid (pKa 4.76, ideal) with
    // 0.1 mol/L base, 0.005 pH noise: the Gran line after the endpoint gives the content
    // with a standard uncertainty from its regression; over 300 noisy replicates the k = 2
    // interval must cover the truth about 95 % of the time (GUM 6.2; a binomial 300-sample
    // rate has a standard deviation of 1.3 %). Measured: 0.990 — the regression's standard
    // error is on the safe side here, because pH noise makes the Gran function's scatter grow
    // away from the endpoint, which ordinary least squares spreads over every point; the test
    // refuses an interval that covers too rarely.
    let truth = 0.08;
    let clean = curve(4.76, truth, &volumes(20.0));
    let mut noise = Noise(2026);
    let (mut covered, mut n, mut sum) = (0, 0, 0.0);
    for _ in 0..300 {
        let data: Vec<(f64, f64)> = clean.iter().map(|&(v, ph)| (v, ph + 0.005 * noise.normal())).collect();
        let d = smoothed_endpoints(&data, 2, 0.5).unwrap();
        let g = gran_both_sides(&data, 25.0, d[0].volume_ml).unwrap();
        let a = g.after.unwrap();
        let c = content(&ContentInputs {
            endpoint_ml: a.fit.endpoint_ml,
            endpoint_standard_uncertainty_ml: a.endpoint_standard_error_ml,
            burette_standard_uncertainty_ml: 0.0,
            titrant_molar: 0.1,
            titrant_standard_uncertainty_molar: 0.0,
            aliquot_ml: 25.0,
            aliquot_standard_uncertainty_ml: 0.0,
            analyte_per_titrant: 1.0,
            molar_mass_g_per_mol: 60.052,
            sample: None,
        })
        .unwrap();
        n += 1;
        sum += c.mol_per_l;
        if (c.mol_per_l - truth).abs() <= c.expanded(c.mol_per_l) {
            covered += 1;
        }
    }
    let coverage = covered as f64 / n as f64;
    let mean = sum / n as f64;
    eprintln!("round trip: {n} replicates, mean {mean:.6} mol/L, k = 2 coverage {coverage:.3}");
    assert!((mean / truth - 1.0).abs() < 5e-4, "mean {mean}"); // mean recovers the truth, self-consistency; 5e-4 relative tolerance chosen for this test
    assert!((0.92..=1.0).contains(&coverage), "coverage {coverage}"); // about 95 % (GUM, above) less a margin of several binomial standard deviations, chosen for this test
}

#[test]
fn content_units_and_budget() {
    // 25 mL aliquot of a sample (5.000 g made up to 250 mL) takes 20.00 mL of 0.1000 mol/L
    // NaOH; the analyte is diprotic (0.5 mol per mol of base), 90.03 g/mol (oxalic acid,
    // IUPAC 2021 atomic weights). c = 0.5·0.1·20/25 = 0.04 mol/L; 3.6012 g/L;
    // % w/w = 100·0.04·90.03·0.25/5 = 18.006.
    let c = content(&ContentInputs {
        endpoint_ml: 20.0,
        endpoint_standard_uncertainty_ml: 0.01,
        burette_standard_uncertainty_ml: 0.03,
        titrant_molar: 0.1,
        titrant_standard_uncertainty_molar: 0.0002,
        aliquot_ml: 25.0,
        aliquot_standard_uncertainty_ml: 0.02,
        analyte_per_titrant: 0.5,
        molar_mass_g_per_mol: 90.03,
        sample: Some(Sample {
            mass_g: 5.0,
            mass_standard_uncertainty_g: 0.0001,
            made_up_to_ml: 250.0,
            made_up_standard_uncertainty_ml: 0.09,
        }),
    })
    .unwrap();
    assert!((c.mol_per_l - 0.04).abs() < 1e-15); // computed above from the inputs (self-consistency); 1e-15 rounding tolerance
    assert!((c.g_per_l - 3.6012).abs() < 1e-12); // computed above from the inputs (self-consistency); 1e-12 rounding tolerance
    assert!((c.g_per_100_ml - 0.36012).abs() < 1e-12); // computed above from the inputs (self-consistency); 1e-12 rounding tolerance
    assert!((c.percent_w_w.unwrap() - 18.006).abs() < 1e-9); // computed above from the inputs (self-consistency); 1e-9 rounding tolerance
    // GUM 5.1.6: relative uncertainties add in quadrature.
    let expected = ((0.01f64 / 20.0).powi(2)
        + (0.03f64 / 20.0).powi(2)
        + (0.0002f64 / 0.1).powi(2)
        + (0.02f64 / 25.0).powi(2)
        + (0.0001f64 / 5.0).powi(2)
        + (0.09f64 / 250.0).powi(2))
    .sqrt();
    assert!((c.relative_standard_uncertainty - expected).abs() < 1e-15); // GUM 5.1.6 (above), same result two ways; 1e-15 rounding tolerance
    let shares: f64 = c.budget.iter().map(|b| b.share).sum();
    assert!((shares - 1.0).abs() < 1e-12); // budget shares sum to 1, by definition; 1e-12 rounding tolerance
    assert_eq!(c.budget[0].source, "titrant concentration");
    // Refused inputs are named.
    let mut bad = ContentInputs {
        endpoint_ml: -1.0,
        ..ContentInputs {
            endpoint_ml: 1.0,
            endpoint_standard_uncertainty_ml: 0.0,
            burette_standard_uncertainty_ml: 0.0,
            titrant_molar: 0.1,
            titrant_standard_uncertainty_molar: 0.0,
            aliquot_ml: 10.0,
            aliquot_standard_uncertainty_ml: 0.0,
            analyte_per_titrant: 1.0,
            molar_mass_g_per_mol: 1.0,
            sample: None,
        }
    };
    assert!(content(&bad).unwrap_err().to_string().contains("endpoint volume"));
    bad.endpoint_ml = f64::NAN;
    assert!(content(&bad).is_err());
}
