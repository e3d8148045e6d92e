//! A deterministic generator of invented heart-failure notes, for the benchmark.
//!
//! Every note is assembled from templates written for this project (ward rounds, discharge
//! summaries, observation lines, weight and lab tables, nursing checklists, stacked
//! negations, clinic letters, terse handovers) with values drawn from a seeded PRNG of our
//! own (SplitMix64), so the same seed always gives byte-identical notes on every machine.
//! No real people, places or brands: patients are initials, drugs are generic names.
//!
//! ```text
//! cargo run --release --example gen_corpus -- OUT_DIR [SIZE_MB] [SEED]
//! ```
//!
//! The benchmark (`benches/throughput.rs`) includes this file as a module.

#![allow(dead_code)]

use std::fmt::Write as _;
use std::io;
use std::path::Path;

/// SplitMix64 (Steele, Lea, Flood 2014): tiny, fast and fully deterministic.
#[derive(Debug, Clone)]
pub struct Rng(u64);

impl Rng {
    pub fn new(seed: u64) -> Rng {
        Rng(seed)
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    /// Uniform in `lo..=hi`.
    pub fn range(&mut self, lo: i64, hi: i64) -> i64 {
        let span = (hi - lo + 1) as u64;
        lo + (self.next_u64() % span) as i64
    }

    /// One decimal place in `lo..=hi`.
    pub fn dec(&mut self, lo: f64, hi: f64) -> f64 {
        let steps = ((hi - lo) * 10.0).round() as i64;
        lo + self.range(0, steps) as f64 / 10.0
    }

    pub fn pick<'a>(&mut self, items: &[&'a str]) -> &'a str {
        items[(self.next_u64() % items.len() as u64) as usize]
    }

    pub fn chance(&mut self, percent: u64) -> bool {
        self.next_u64() % 100 < percent
    }
}

const DRUGS: &[&str] = &[
    "furosemide",
    "bumetanide",
    "torasemide",
    "spironolactone",
    "eplerenone",
    "bisoprolol",
    "carvedilol",
    "ramipril",
    "sacubitril/valsartan",
    "dapagliflozin",
    "empagliflozin",
    "metolazone",
    "digoxin",
    "apixaban",
];
const FINDINGS: &[&str] = &[
    "peripheral oedema",
    "pitting oedema",
    "sacral oedema",
    "ascites",
    "orthopnoea",
    "PND",
    "crackles",
    "bibasal creps",
    "raised JVP",
    "S3",
    "hepatomegaly",
    "pleural effusion",
    "cool peripheries",
    "mottling",
    "chest pain",
    "palpitations",
    "syncope",
    "confusion",
    "wheeze",
    "leg swelling",
];
const SECTIONS: &[&str] = &[
    "History",
    "HPC",
    "Examination",
    "O/E",
    "Impression",
    "Plan",
    "Assessment",
    "Medications",
    "Results",
    "Social",
];

/// The note generator.
pub struct Generator {
    rng: Rng,
}

impl Generator {
    pub fn new(seed: u64) -> Generator {
        Generator {
            rng: Rng::new(seed),
        }
    }

    fn date(&mut self) -> String {
        let (d, m) = (self.rng.range(1, 28), self.rng.range(1, 12));
        match self.rng.range(0, 3) {
            0 => format!("{d:02}/{m:02}/2026"),
            1 => format!("2026-{m:02}-{d:02}"),
            2 => format!(
                "{d} {} 2026",
                [
                    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov",
                    "Dec"
                ][(m - 1) as usize]
            ),
            _ => format!("{m}/{d}/26"),
        }
    }

    fn initials(&mut self) -> String {
        let a = (b'A' + self.rng.range(0, 25) as u8) as char;
        let b = (b'A' + self.rng.range(0, 25) as u8) as char;
        format!("{a}.{b}.")
    }

    fn obs_line(&mut self) -> String {
        let r = &mut self.rng;
        let (sbp, dbp, hr) = (r.range(78, 176), r.range(40, 98), r.range(48, 132));
        let (rr, sat, t) = (r.range(12, 30), r.range(86, 100), r.dec(35.4, 38.6));
        match r.range(0, 4) {
            0 => format!("HR {hr} reg, BP {sbp}/{dbp}, RR {rr}, SpO2 {sat}% RA, T {t:.1}"),
            1 => format!("Obs: BP {sbp}/{dbp} mmHg | P {hr} bpm | RR {rr}/min | sats {sat}% on 2L | temp {t:.1}C"),
            2 => format!("Vitals - Blood pressure {sbp}/{dbp}, heart rate {hr}, resp rate {rr}, O2 sat {sat} %, temperature {:.1} F", t * 9.0 / 5.0 + 32.0),
            3 => format!("NEWS obs {}: BP {sbp}/{dbp}  HR {hr}  RR {rr}  SpO2 {sat}%  T {t:.1}", r.range(0, 9)),
            _ => format!("b/p {sbp}/{dbp}; pulse {hr} irreg irreg; rr {rr}; sao2 {sat}%"),
        }
    }

    fn weight(&mut self) -> String {
        let kg = self.rng.dec(48.0, 142.0);
        match self.rng.range(0, 3) {
            0 => format!("Wt {kg:.1} kg (yest {:.1})", kg + self.rng.dec(-1.5, 1.5)),
            1 => format!("Weight today {:.0} lb ({kg:.1} kg)", kg * 2.20462),
            2 => format!(
                "Daily weight: {kg:.1}kg, dry weight est. {:.1}kg",
                kg - self.rng.dec(0.0, 6.0)
            ),
            _ => format!(
                "wt {kg:.1}, admission wt {:.1}",
                kg + self.rng.dec(0.0, 8.0)
            ),
        }
    }

    fn bloods(&mut self) -> String {
        let r = &mut self.rng;
        let (cr, ur, k, na, hb) = (
            r.range(55, 320),
            r.dec(3.0, 32.0),
            r.dec(2.9, 6.4),
            r.range(122, 146),
            r.range(78, 162),
        );
        match r.range(0, 2) {
            0 => format!("Bloods: Cr {cr} (adm {}), Ur {ur:.1}, K {k:.1}, Na {na}, Hb {hb}", cr - r.range(-30, 30)),
            1 => format!("Labs: creatinine {:.2} mg/dL, BUN {:.0}, potassium {k:.1} mmol/L, sodium {na}, NT-proBNP {} pg/mL", cr as f64 / 88.4, ur * 2.8, r.range(120, 35000)),
            _ => format!("U&E: Na {na} / K {k:.1} / Ur {ur:.1} / Cr {cr}; BNP {} ng/L; lactate {:.1}", r.range(40, 4800), r.dec(0.5, 6.0)),
        }
    }

    fn negations(&mut self) -> String {
        let n = self.rng.range(2, 7);
        let mut s = String::from(self.rng.pick(&["No ", "Denies ", "Nil ", "Negative for "]));
        for i in 0..n {
            if i > 0 {
                s.push_str(self.rng.pick(&[", no ", ", ", " or ", "; no "]));
            }
            s.push_str(self.rng.pick(FINDINGS));
        }
        s.push('.');
        s
    }

    fn exam(&mut self) -> String {
        let f = self.rng.pick(FINDINGS);
        let g = self.rng.pick(FINDINGS);
        match self.rng.range(0, 5) {
            0 => format!(
                "JVP +{} cm. HS I+II, ?S3. {} to mid zones. Pitting oedema to {}.",
                self.rng.range(1, 9),
                f,
                self.rng.pick(&["ankles", "knees", "thighs", "sacrum"])
            ),
            1 => format!(
                "Warm peripheries, CRT <{}s. Possible {f}; ? {g}.",
                self.rng.range(2, 4)
            ),
            2 => format!("Chest: {f} bilat. Abdo soft. {}", self.negations()),
            3 => format!("Mother had {f}. History of {g} in 2019, resolved."),
            4 => format!("If {f} recurs, increase diuretic. Monitor for {g}."),
            _ => format!("CVS: {f} present, {g} absent."),
        }
    }

    fn med_line(&mut self) -> String {
        let d = self.rng.pick(DRUGS);
        let dose = self.rng.pick(&[
            "2.5mg", "5 mg", "10mg", "20 mg", "40mg", "80 mg", "1 mg", "25mg",
        ]);
        let freq = self.rng.pick(&[
            "od",
            "bd",
            "OD",
            "BD",
            "daily",
            "twice daily",
            "mane",
            "nocte",
        ]);
        let change = self.rng.pick(&[
            "continue", "increase", "hold", "stop", "started", "reduce", "-> IV", "titrate",
        ]);
        format!("- {d} {dose} {freq}, {change}")
    }

    fn weight_table(&mut self) -> String {
        let mut s = String::from(
            "| Date | Weight (kg) | In (mL) | Out (mL) | Balance |\n|---|---|---|---|---|\n",
        );
        let mut kg = self.rng.dec(60.0, 120.0);
        for _ in 0..self.rng.range(3, 8) {
            let (i, o) = (self.rng.range(800, 2400), self.rng.range(600, 4200));
            let _ = writeln!(s, "| {} | {kg:.1} | {i} | {o} | {:+} |", self.date(), i - o);
            kg -= self.rng.dec(-0.4, 1.6);
        }
        s
    }

    fn ward_round(&mut self, out: &mut String) {
        let _ = writeln!(
            out,
            "Cardiology WR  {} {:02}:{:02}",
            self.date(),
            self.rng.range(7, 19),
            self.rng.range(0, 59)
        );
        let _ = writeln!(
            out,
            "Pt: {}, {}{}, Bed {}\n",
            self.initials(),
            self.rng.range(34, 97),
            self.rng.pick(&["M", "F"]),
            self.rng.range(1, 30)
        );
        let _ = writeln!(
            out,
            "S: {}-pillow orthopnoea. {}",
            self.rng.range(1, 5),
            self.negations()
        );
        let _ = writeln!(out, "O: {}", self.obs_line());
        let _ = writeln!(out, "   {}", self.exam());
        let _ = writeln!(out, "   {}", self.weight());
        let _ = writeln!(out, "   {}", self.bloods());
        let _ = writeln!(
            out,
            "Imp: {} HF{} (EF {}% on echo). {}.",
            self.rng.pick(&[
                "Acute on chronic",
                "De novo",
                "Decompensated",
                "Chronic stable"
            ]),
            self.rng.pick(&["rEF", "mrEF", "pEF", "impEF"]),
            self.rng.range(15, 65),
            self.rng.pick(&[
                "Remains fluid overloaded, warm",
                "Warm and dry",
                "Cold and wet",
                "Euvolaemic",
                "NYHA class III",
                "NYHA II-III"
            ])
        );
        out.push_str("P:\n");
        for _ in 0..self.rng.range(2, 6) {
            let _ = writeln!(out, "  {}", self.med_line());
        }
        out.push('\n');
    }

    fn discharge(&mut self, out: &mut String) {
        let _ = writeln!(
            out,
            "DISCHARGE SUMMARY\nAdmitted: {}   Discharged: {}",
            self.date(),
            self.date()
        );
        for title in [
            "Diagnosis",
            "History",
            "Examination",
            "Results",
            "Medications",
            "Follow-up",
        ] {
            let _ = writeln!(out, "\n{}:", title.to_uppercase());
            match title {
                "Diagnosis" => {
                    let _ = writeln!(
                        out,
                        "Heart failure with {} ejection fraction, LVEF {}%; NYHA {}.",
                        self.rng.pick(&["reduced", "mildly reduced", "preserved"]),
                        self.rng.range(15, 65),
                        self.rng.pick(&["I", "II", "III", "IV"])
                    );
                }
                "Results" => {
                    let _ = writeln!(out, "{}\n{}", self.bloods(), self.bloods());
                }
                "Medications" => {
                    for _ in 0..self.rng.range(3, 7) {
                        let _ = writeln!(out, "{}", self.med_line());
                    }
                }
                "Examination" => {
                    let _ = writeln!(
                        out,
                        "{}\n{}\n{}",
                        self.obs_line(),
                        self.exam(),
                        self.weight()
                    );
                }
                "Follow-up" => {
                    let _ = writeln!(out, "HF nurse review in {} weeks. Repeat U&E in {} days. Discharge weight {:.1} kg.", self.rng.range(1, 6), self.rng.range(3, 14), self.rng.dec(50.0, 130.0));
                }
                _ => {
                    let _ = writeln!(out, "{} {}", self.exam(), self.negations());
                }
            }
        }
        out.push('\n');
    }

    fn nursing_obs(&mut self, out: &mut String) {
        let _ = writeln!(out, "Nursing obs chart - night {}", self.date());
        for _ in 0..self.rng.range(4, 10) {
            let _ = writeln!(out, "{:02}:00  {}", self.rng.range(0, 23), self.obs_line());
        }
        let _ = writeln!(
            out,
            "Fluid balance: in {} mL / out {} mL; UO {} mL/hr",
            self.rng.range(500, 2500),
            self.rng.range(300, 4000),
            self.rng.range(5, 200)
        );
        let _ = writeln!(out, "{}\n", self.negations());
    }

    fn clinic_letter(&mut self, out: &mut String) {
        let _ = writeln!(
            out,
            "Heart Failure Clinic {}\n\nDear Doctor,\n",
            self.date()
        );
        let _ = writeln!(
            out,
            "I reviewed this {}-year-old in clinic today. {} {}",
            self.rng.range(40, 95),
            self.exam(),
            self.negations()
        );
        let _ = writeln!(
            out,
            "On examination: {}. {}.",
            self.obs_line(),
            self.weight()
        );
        let _ = writeln!(out, "{}\n", self.bloods());
        let _ = writeln!(out, "{}\n{}", self.med_line(), self.med_line());
        let _ = writeln!(out, "\nYours sincerely,\nHF Specialist Nurse\n");
    }

    fn handover(&mut self, out: &mut String) {
        let _ = writeln!(
            out,
            "Bed {}: {} HF, {}; wt {:.1} (-{:.1}); K {:.1}; {}; for {}.",
            self.rng.range(1, 30),
            self.rng.pick(&["ADHF", "HFrEF", "HFpEF", "?HF"]),
            self.rng
                .pick(&["wet/warm", "dry/warm", "cold/wet", "improving", "stable"]),
            self.rng.dec(50.0, 130.0),
            self.rng.dec(0.0, 2.5),
            self.rng.dec(3.0, 6.0),
            self.rng
                .pick(&["no orthopnoea", "? effusion", "not for CPR", "denies CP"]),
            self.rng
                .pick(&["U&E am", "echo", "IV diuretic review", "discharge"]),
        );
    }

    /// One note of roughly `target` bytes (at least one template).
    pub fn note(&mut self, target: usize) -> String {
        let mut out = String::with_capacity(target + 2048);
        while out.len() < target {
            match self.rng.range(0, 9) {
                0 | 1 => self.ward_round(&mut out),
                2 => self.discharge(&mut out),
                3 => self.nursing_obs(&mut out),
                4 => self.clinic_letter(&mut out),
                5 => {
                    out.push_str(&self.weight_table());
                    out.push('\n');
                }
                6 => {
                    let _ = writeln!(out, "{}:\n{}\n", self.rng.pick(SECTIONS), self.exam());
                }
                7 => {
                    let _ = writeln!(out, "{}\n", self.negations());
                }
                _ => {
                    for _ in 0..self.rng.range(2, 6) {
                        self.handover(&mut out);
                    }
                    out.push('\n');
                }
            }
        }
        out
    }

    /// A note size drawn from a spread typical of clinical notes: mostly 1-8 KB, some
    /// longer summaries.
    pub fn note_size(&mut self) -> usize {
        match self.rng.range(0, 9) {
            0..=5 => self.rng.range(800, 5000) as usize,
            6..=8 => self.rng.range(5000, 12000) as usize,
            _ => self.rng.range(12000, 40000) as usize,
        }
    }
}

/// What [`write_corpus`] wrote.
#[derive(Debug, Clone, Copy, Default)]
pub struct CorpusStats {
    pub files: usize,
    pub bytes: u64,
}

/// Write about `total_bytes` of notes under `dir` (1000 notes per subdirectory), streaming.
pub fn write_corpus(dir: &Path, total_bytes: u64, seed: u64) -> io::Result<CorpusStats> {
    let mut g = Generator::new(seed);
    let mut stats = CorpusStats::default();
    while stats.bytes < total_bytes {
        let sub = dir.join(format!("batch-{:05}", stats.files / 1000));
        if stats.files % 1000 == 0 {
            std::fs::create_dir_all(&sub)?;
        }
        let size = g.note_size();
        let note = g.note(size);
        std::fs::write(sub.join(format!("note-{:08}.txt", stats.files)), &note)?;
        stats.files += 1;
        stats.bytes += note.len() as u64;
    }
    Ok(stats)
}

/// A single line of about `bytes` bytes: observations and findings joined by `; `.
pub fn long_line(seed: u64, bytes: usize) -> String {
    let mut g = Generator::new(seed);
    let mut s = String::with_capacity(bytes + 256);
    while s.len() < bytes {
        let piece = match g.rng.range(0, 3) {
            0 => g.obs_line(),
            1 => g.weight(),
            2 => g.bloods(),
            _ => g.exam(),
        };
        s.push_str(&piece.replace('\n', " "));
        s.push_str("; ");
    }
    s.push('\n');
    s
}

/// `lines` lines of stacked negations: `no X, no Y, no Z ...`.
pub fn stacked_negations(seed: u64, lines: usize) -> String {
    let mut rng = Rng::new(seed);
    let mut s = String::with_capacity(lines * 120);
    for _ in 0..lines {
        s.push_str("no ");
        for i in 0..rng.range(4, 9) {
            if i > 0 {
                s.push_str(", no ");
            }
            s.push_str(rng.pick(FINDINGS));
        }
        s.push('\n');
    }
    s
}

/// One note of about `bytes` bytes made of bullet lines.
pub fn bullets(seed: u64, bytes: usize) -> String {
    let mut g = Generator::new(seed);
    let mut s = String::with_capacity(bytes + 256);
    while s.len() < bytes {
        let line = match g.rng.range(0, 4) {
            0 => g.med_line(),
            1 => format!("- {}", g.obs_line()),
            2 => format!("* {}", g.weight()),
            3 => format!("- {}", g.negations()),
            _ => format!("\u{2022} {}", g.exam()),
        };
        s.push_str(&line);
        s.push('\n');
    }
    s
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let Some(dir) = args.first() else {
        eprintln!("usage: gen_corpus OUT_DIR [SIZE_MB] [SEED]");
        std::process::exit(2);
    };
    let mb: u64 = args.get(1).and_then(|s| s.parse().ok()).unwrap_or(16);
    let seed: u64 = args.get(2).and_then(|s| s.parse().ok()).unwrap_or(7);
    match write_corpus(Path::new(dir), mb << 20, seed) {
        Ok(s) => println!("wrote {} notes, {} bytes, under {dir}", s.files, s.bytes),
        Err(e) => {
            eprintln!("gen_corpus: {e}");
            std::process::exit(1);
        }
    }
}
