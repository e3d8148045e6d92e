//! tidemark's conversion factors cross-checked against the `uom` crate (a general-purpose
//! units library from crates.io, which takes its definitions from NIST SP 811), so that a
//! slip in a hand-written factor cannot pass unnoticed.

use tidemark::model::MeasureConcept;
use tidemark::units::normalize;
use uom::si::f64::{Length, Mass, ThermodynamicTemperature};
use uom::si::length::{centimeter, foot, inch};
use uom::si::mass::{kilogram, pound};
use uom::si::thermodynamic_temperature::{degree_celsius, degree_fahrenheit};

fn ours(concept: MeasureConcept, value: f64, unit: &str) -> f64 {
    normalize(concept, value, unit, false)
        .expect("convertible")
        .0
}

#[test]
fn pounds_to_kilograms_agree_with_uom() {
    for lb in [1.0, 98.5, 181.0, 212.8, 350.0] {
        let reference = Mass::new::<pound>(lb).get::<kilogram>();
        let mine = ours(MeasureConcept::Weight, lb, "[lb_av]");
        // uom stores the pound rounded to seven digits (0.4535924 kg); the exact definition
        // (0.45359237 kg) is checked in `units::tests`. Agreement to 1 part in 10^6.
        assert!(
            ((mine - reference) / reference).abs() < 1e-6,
            "{lb}: {mine} vs {reference}"
        );
    }
}

#[test]
fn fahrenheit_to_celsius_agrees_with_uom() {
    for f in [95.0, 97.9, 98.6, 100.2, 104.0] {
        let reference =
            ThermodynamicTemperature::new::<degree_fahrenheit>(f).get::<degree_celsius>();
        assert!(
            (ours(MeasureConcept::Temperature, f, "[degF]") - reference).abs() < 1e-9,
            "{f}"
        );
    }
}

#[test]
fn inches_and_feet_to_centimetres_agree_with_uom() {
    for i in [60.0, 64.0, 71.0] {
        let reference = Length::new::<inch>(i).get::<centimeter>();
        assert!(
            (ours(MeasureConcept::Height, i, "[in_i]") - reference).abs() < 1e-9,
            "{i}"
        );
    }
    let reference = Length::new::<foot>(5.0).get::<centimeter>();
    assert!((ours(MeasureConcept::Height, 5.0, "[ft_i]") - reference).abs() < 1e-9);
}
