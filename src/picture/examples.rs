//! Invented example notes, hand-built as extractions, shared by the schema and renderer
//! tests: a three-day ward record, a discharge summary with a conflict, and a clinic letter
//! with everything needed for the derived values.

use super::testkit::Note;
use crate::model::{
    FindingConcept as F, MeasureConcept as M, SectionKind, StatementKind as K, TimeRef,
};

/// A three-day ward record: wet and warm on day 1, cold and wet on day 3.
pub fn ward_record() -> Note {
    let text = "12/11/2026 WR\nAcute decompensated HFrEF (LVEF 20%). Orthopnoea 2 pillows. JVP +4. \
Mild bibasal creps. Warm, CRT <2s. BP 118/72, HR 84. Wt 70.2 kg. Cr 134 K 4.3. FB +850 ml.\n\
14/11/2026 WR\nNew confusion, oliguric. Cold peripheries, CRT 4 s. BP 84/70, HR 118. JVP to angle of jaw. \
Pitting oedema to thighs. Wt 72.6 kg. Lactate 3.8. Cr 231, K 5.4. FB +400 ml. Imp: euvolaemic?? no - fluid overloaded.\n";
    let mut n = Note::new(text);
    n.episode("12/11/2026 WR", Some("2026-11-12"))
        .episode("14/11/2026 WR", Some("2026-11-14"));
    n.rewind();
    n.state("decompensated", K::Acuity, "decompensated")
        .state("HFrEF", K::HfType, "hfref");
    n.measure("LVEF 20%", M::Lvef, 20.0);
    n.present("Orthopnoea 2 pillows", F::Orthopnea)
        .ex
        .findings
        .last_mut()
        .unwrap()
        .detail
        .pillows = Some(2);
    n.measure("JVP +4", M::Jvp, 4.0).unit = None;
    n.present("Mild bibasal creps", F::Crackles)
        .absent("Warm", F::CoolPeripheries)
        .absent("CRT <2s", F::ProlongedCapRefill)
        .bp("BP 118/72", 118.0, 72.0);
    n.measure("HR 84", M::HeartRate, 84.0);
    n.measure("Wt 70.2 kg", M::Weight, 70.2);
    n.measure("Cr 134", M::Creatinine, 134.0);
    n.measure("K 4.3", M::Potassium, 4.3);
    n.measure("FB +850 ml", M::FluidBalance, 850.0);
    n.present("New confusion", F::AlteredMentation)
        .present("oliguric", F::Oliguria)
        .present("Cold peripheries", F::CoolPeripheries)
        .present("CRT 4 s", F::ProlongedCapRefill)
        .bp("BP 84/70", 84.0, 70.0);
    n.measure("HR 118", M::HeartRate, 118.0);
    n.present("JVP to angle of jaw", F::RaisedJvp)
        .present("Pitting oedema to thighs", F::PeripheralEdema);
    n.measure("Wt 72.6 kg", M::Weight, 72.6);
    n.measure("Lactate 3.8", M::Lactate, 3.8);
    n.measure("Cr 231", M::Creatinine, 231.0);
    n.measure("K 5.4", M::Potassium, 5.4);
    n.measure("FB +400 ml", M::FluidBalance, 400.0);
    n.state("fluid overloaded", K::VolumeStatus, "overloaded");
    n
}

/// A discharge summary: overloaded on admission, examined dry at discharge but the writer
/// still calls her overloaded (a conflict); age and sex for eGFR.
pub fn discharge_summary() -> Note {
    let text = "Diagnosis\nAcute on chronic HFrEF.\nHistory\n72 year old woman. On admission JVP +6 cm, \
bibasal crackles, 3-pillow orthopnoea, admission weight 78.6 kg. Mother had heart failure.\n\
Investigations\nCreatinine 118 on admission, 134 on discharge. Echo: EF 30 to 35 percent.\n\
Examination at discharge\nBP 112/68 mmHg, HR 72. JVP not raised. Chest clear. No peripheral oedema. \
Warm and well perfused, CRT < 2 s. Discharge weight 72.9 kg. Still overloaded. NYHA II.\n\
Discharge advice\nTarget weight about 72 kg. If your ankles swell, call.\n";
    let mut n = Note::new(text);
    n.section(SectionKind::Diagnosis, "Diagnosis")
        .section(SectionKind::History, "History")
        .section(SectionKind::Labs, "Investigations")
        .section(SectionKind::Examination, "Examination at discharge")
        .section(SectionKind::DischargeInstructions, "Discharge advice");
    n.rewind();
    n.state("Acute on chronic", K::Acuity, "acute_on_chronic")
        .state("HFrEF", K::HfType, "hfref");
    n.state("72 year old", K::Age, "72")
        .state("woman", K::Sex, "female");
    n.measure_in("JVP +6 cm", M::Jvp, 6.0, "cm", 6.0);
    n.present("bibasal crackles", F::Crackles)
        .present("3-pillow orthopnoea", F::Orthopnea);
    n.measure("admission weight 78.6 kg", M::Weight, 78.6)
        .time_ref = Some(TimeRef::Admission);
    n.statement("heart failure", K::HeartFailure, "hf")
        .experiencer = crate::model::Experiencer::Other;
    n.measure("Creatinine 118 on admission", M::Creatinine, 118.0)
        .time_ref = Some(TimeRef::Admission);
    n.measure("134 on discharge", M::Creatinine, 134.0).time_ref = Some(TimeRef::Discharge);
    let ef = n.measure("EF 30 to 35 percent", M::Lvef, 32.5);
    ef.range = Some((30.0, 35.0));
    n.bp("BP 112/68 mmHg", 112.0, 68.0);
    n.measure("HR 72", M::HeartRate, 72.0);
    n.absent("JVP not raised", F::RaisedJvp)
        .absent("Chest clear", F::Crackles)
        .absent("No peripheral oedema", F::PeripheralEdema)
        .state("Warm and well perfused", K::Perfusion, "warm")
        .absent("CRT < 2 s", F::ProlongedCapRefill);
    n.measure("Discharge weight 72.9 kg", M::Weight, 72.9)
        .time_ref = Some(TimeRef::Discharge);
    n.state("overloaded", K::VolumeStatus, "overloaded")
        .state("NYHA II", K::Nyha, "II");
    n.state("Target weight about 72 kg", K::TargetWeight, "72");
    n.finding(
        "ankles swell",
        F::PeripheralEdema,
        crate::model::Assertion::Hypothetical,
    );
    n
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::picture::{build, Congestion, Perfusion};

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn ward_record_picture() {
        let p = build(&ward_record().build());
        // Day 3 (the latest) decides both axes: cold and wet (Nohria profile C).
        assert_eq!(p.profile.label, "cold-wet");
        assert!(p.profile.evidence.iter().all(|e| e.episode == Some(1)));
        // Six cold signs: confusion, oliguria, cold peripheries, CRT 4 s, PPP, lactate.
        let cold = p
            .profile
            .evidence
            .iter()
            .filter(|e| e.supports == "cold")
            .count();
        assert_eq!(cold, 6);
        assert!(p.profile.conflicts.is_empty());
        let c = &p.classifications;
        assert_eq!(c.hf_type.as_deref(), Some("hfref"));
        assert_eq!(c.sources.hf_type.as_ref().unwrap().basis, "stated");
        // "Acute decompensated" with no chronic HF documented maps to acute.
        assert_eq!(c.acuity.as_deref(), Some("acute"));
        assert_eq!(c.volume_status.as_deref(), Some("overloaded"));
        let d = &p.derived;
        // BP 84/70: MAP 74.667 (McGee), PP 14, PPP 16.7 % narrow (Stevenson & Perloff).
        assert!(close(
            d.mean_arterial_pressure.value.unwrap(),
            74.667,
            0.001
        ));
        assert_eq!(d.pulse_pressure.value, Some(14.0));
        assert_eq!(d.proportional_pulse_pressure.flag, Some("narrow"));
        // Shock index 118/84 = 1.405 (Allgower & Burri: >= 1.0 abnormal).
        assert!(close(d.shock_index.value.unwrap(), 1.4048, 1e-4));
        assert_eq!(d.shock_index.flag, Some("raised"));
        assert_eq!(d.bmi.reason.as_deref(), Some("no height documented"));
        assert_eq!(d.egfr.reason.as_deref(), Some("no age documented"));
        assert_eq!(d.lvef_category.as_ref().unwrap().category, Some("hfref"));
        let w = &p.trends.weight;
        // 70.2 -> 72.6 kg in 2 days: > 2 kg within 3 days (ESC HFA "Weight gain").
        assert!(close(w.change.unwrap(), 2.4, 1e-9));
        assert_eq!(w.days, Some(2));
        assert!(close(w.per_day.unwrap(), 1.2, 1e-9));
        assert!(w.gain_flag);
        let fb = &p.trends.fluid_balance;
        assert_eq!(fb.days.len(), 2);
        assert_eq!(fb.days[0].date.as_deref(), Some("2026-11-12"));
        assert_eq!(fb.cumulative, Some(1250.0));
        assert_eq!(p.trends.creatinine.change, Some(97.0));
        assert!(close(p.trends.potassium.change.unwrap(), 1.1, 1e-9));
    }

    #[test]
    fn discharge_summary_picture() {
        let p = build(&discharge_summary().build());
        let pr = &p.profile;
        // The discharge examination decides: dry and warm, although the history was wet.
        assert_eq!(
            (pr.congestion, pr.perfusion),
            (Congestion::Dry, Perfusion::Warm)
        );
        assert_eq!(pr.label, "warm-dry");
        // "Still overloaded" against the documented absent signs.
        assert_eq!(pr.conflicts.len(), 1);
        assert_eq!(pr.conflicts[0].axis, "congestion");
        assert!(pr
            .set_aside
            .iter()
            .any(|e| e.concept == "orthopnea" && e.note.starts_with("earlier assessment")));
        assert!(pr
            .set_aside
            .iter()
            .any(|e| e.concept == "peripheral_edema" && e.note.contains("hypothetical")));
        let c = &p.classifications;
        assert_eq!(c.acuity.as_deref(), Some("acute_on_chronic"));
        assert_eq!(c.nyha_class.as_deref(), Some("II"));
        assert_eq!(c.volume_status.as_deref(), Some("overloaded"));
        assert_eq!(
            (p.patient.age, p.patient.sex.as_deref()),
            (Some(72), Some("female"))
        );
        let d = &p.derived;
        assert!(close(
            d.mean_arterial_pressure.value.unwrap(),
            82.667,
            0.001
        ));
        assert!(close(
            d.proportional_pulse_pressure.value.unwrap(),
            39.286,
            0.001
        ));
        assert!(close(d.shock_index.value.unwrap(), 0.6429, 1e-4));
        // CKD-EPI 2021 (Inker et al. 2021), woman 72 y, creatinine 134 umol/L (the discharge
        // value, later than the admission one): 36.3, computed from the published
        // coefficients with 134 / 88.4 mg/dL.
        assert!(close(d.egfr.value.unwrap(), 36.3, 0.05));
        assert_eq!(d.egfr.category, Some("G3b"));
        assert_eq!(d.egfr.inputs.len(), 3);
        // "EF 30 to 35 percent" lies in HFrEF; the stated type is kept as stated.
        assert_eq!(d.lvef_category.as_ref().unwrap().category, Some("hfref"));
        assert_eq!(c.sources.hf_type.as_ref().unwrap().basis, "stated");
        let w = &p.trends.weight;
        assert_eq!((w.first, w.last), (Some(78.6), Some(72.9)));
        assert!(close(w.above_target.unwrap(), 0.9, 1e-9));
        assert!(!w.gain_flag);
        assert_eq!(p.trends.creatinine.change, Some(16.0));
    }
}
