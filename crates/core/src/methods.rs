//! The methods paragraph of a report: what was done, in words, with the published methods cited,
//! plus the input's SHA-256 so a result can be tied to its data.
//!
//! References are standard citations of the methods used; those not checked against the source
//! text here are from memory (marked in the comments beside them).

use sha2::{Digest, Sha256};

use crate::document::Analysis;
pub use crate::report::Methods;
use crate::report::Report;

// Citations. LeRoy–Bernstein: checked against the source abstract (domain notes); the others
// are standard citations given from memory.
const BIRGE_SPONER: &str = "R. T. Birge and H. Sponer, Phys. Rev. 28, 259 (1926)"; // from memory
const LEROY_BERNSTEIN: &str = "R. J. LeRoy and R. B. Bernstein, J. Chem. Phys. 52, 3869 (1970)";
const NDE_OUTER: &str = "R. J. LeRoy and W. Lam, Chem. Phys. Lett. 71, 544 (1980); J. W. Tromp and \
                         R. J. LeRoy, J. Mol. Spectrosc. 109, 352 (1985)"; // from memory
const AICC: &str = "C. M. Hurvich and C.-L. Tsai, Biometrika 76, 297 (1989)"; // from memory
const DUNHAM: &str = "J. L. Dunham, Phys. Rev. 41, 721 (1932)"; // from memory
const RKR: &str = "R. Rydberg, Z. Phys. 73, 376 (1931); O. Klein, Z. Phys. 76, 226 (1932); \
                   A. L. G. Rees, Proc. Phys. Soc. 59, 998 (1947)"; // from memory
const MLR: &str = "R. J. Le Roy, Y. Huang and C. Jary, J. Chem. Phys. 125, 164310 (2006); R. J. Le \
                   Roy et al., J. Chem. Phys. 131, 204309 (2009)"; // from memory
const HELLMANN_FEYNMAN: &str = "R. P. Feynman, Phys. Rev. 56, 340 (1939)"; // from memory
const COOLEY: &str = "J. W. Cooley, Math. Comput. 15, 363 (1961)"; // from memory
const AME: &str = "M. Wang et al., Chinese Phys. C 45, 030003 (2021) (AME 2020)"; // from memory
const CODATA: &str = "CODATA 2022 recommended values of the fundamental physical constants (NIST)";

pub use crate::words::{in_plain_words, method_name};

/// SHA-256 of `text`, as lower-case hex.
pub fn sha256_hex(text: &str) -> String {
    let digest = Sha256::digest(text.as_bytes());
    digest.iter().map(|b| format!("{b:02x}")).collect()
}

struct Refs(Vec<String>);

impl Refs {
    fn cite(&mut self, r: &str) -> String {
        let i = match self.0.iter().position(|x| x == r) {
            Some(i) => i,
            None => {
                self.0.push(r.to_string());
                self.0.len() - 1
            }
        };
        format!("[{}]", i + 1)
    }
}

fn single_state(r: &Report, refs: &mut Refs, who: &str) -> String {
    let mut s = format!(
        "{who}{} {} (v = {}–{}) were fitted by weighted least squares to G(v) = Σ Y_k0 (v + ½)^k {}; \
         the order ({}) was chosen by nested F-tests against every higher order, with AICc and BIC \
         reported. ",
        r.input.n_points,
        match r.input.kind {
            crate::dunham::DataKind::Levels => "level energies",
            crate::dunham::DataKind::Spacings => "spacings ΔG_{v+½}",
        },
        r.input.v_min,
        r.input.v_max,
        refs.cite(DUNHAM),
        r.fit.order
    );
    s.push_str(&format!(
        "The dissociation limit was extrapolated by the linear and curved Birge–Sponer methods {} and \
         by the LeRoy–Bernstein near-dissociation expression {} (n = {} fixed{}) fitted to the top \
         levels, and by a near-dissociation expansion of the outer form {} fitted to all levels, \
         its correction order chosen by AICc {}, beside the observed sum of spacings as a lower \
         bound. ",
        refs.cite(BIRGE_SPONER),
        refs.cite(LEROY_BERNSTEIN),
        r.settings.lb_n,
        if r.settings.lb_fit_n_free { ", and n free" } else { "" },
        refs.cite(NDE_OUTER),
        refs.cite(AICC)
    ));
    if r.settings.mc_samples > 0 {
        s.push_str(&format!(
            "Statistical uncertainties were propagated from the data covariance to first order and \
             by a Monte Carlo of {} redraws (seed {}) refitting every model. ",
            r.settings.mc_samples, r.settings.seed
        ));
    } else {
        s.push_str(
            "Statistical uncertainties were propagated from the data covariance to first order (no \
             Monte Carlo). ",
        );
    }
    s.push_str(&format!(
        "An estimate entered the recommendation when its own fit converged and described its data \
         (χ² probability at least 0.001), its parameters were physical and its D0 was not below the \
         observed sum. When the expansion was admitted, the model of all levels with the lowest AICc \
         (expansion or polynomial) was preferred; otherwise the near-dissociation fits were \
         preferred when the top observed spacing was at most a quarter of the largest, the \
         polynomial extrapolations otherwise. The model \
         uncertainty is half the range of the admitted estimates (of every estimate with physical \
         parameters when no fit described the data) and at least half the extrapolated \
         part of D0, after the bound LeRoy and Bernstein {} give for their extrapolation; the stated \
         interval holds every admitted estimate with twice its statistical uncertainty and never \
         reaches below the observed sum. ",
        refs.cite(LEROY_BERNSTEIN)
    ));
    s.push_str(match (r.input.sigma_source, r.uncertainty.policy) {
        (crate::report::SigmaSource::EstimatedFromScatter, _) => {
            "No data σ were given; they were estimated from the scatter about the selected fit. "
        }
        (_, crate::settings::SigmaScaling::Never) => "The data σ were used as given. ",
        (_, crate::settings::SigmaScaling::WhenAboveOne) => {
            "For each estimate the data σ were multiplied by √χ²_ν of its own fit where χ²_ν \
             exceeded 1. "
        }
        (_, crate::settings::SigmaScaling::Always) => {
            "For each estimate the data σ were multiplied by √χ²_ν of its own fit. "
        }
    });
    if let Some(d) = r.estimates.iter().find_map(|e| e.potential_fit.as_ref()) {
        s.push_str(&format!(
            "A Morse/long-range potential {} with the tail C_{}/r^{} ({}) was fitted directly to the \
             data by solving the radial Schrödinger equation in it at every step, with eigenvalue \
             derivatives from the Hellmann–Feynman theorem {}; {} exponent coefficients were chosen \
             by AICc {}, and r_e was held fixed ({}). Its D0 = De − E(v = 0) took part in the \
             recommendation like every other estimate. ",
            refs.cite(MLR),
            d.curve.tail[0].m,
            d.curve.tail[0].m,
            if d.cn_fixed { "C_n held at the given value" } else { "C_n fitted" },
            refs.cite(HELLMANN_FEYNMAN),
            d.beta_terms,
            refs.cite(AICC),
            d.re_source
        ));
    }
    if let Some(p) = r
        .potential
        .as_ref()
        .filter(|_| r.potential_comparison.is_some())
    {
        s.push_str(&format!(
            "Its levels were found again by Numerov integration with Cooley's correction {} and \
             compared with the observed levels ({}); a first-order RKR potential {} from the fitted \
             G(v) and the given B_v is shown for comparison. ",
            refs.cite(COOLEY),
            match p.check.chi2_reduced {
                Some(c) => format!("χ²/ν = {c:.3}"),
                None => format!("rms {:.4} cm⁻¹", p.check.rms_cm1),
            },
            refs.cite(RKR)
        ));
    } else if let Some(p) = &r.potential {
        s.push_str(&format!(
            "A first-order RKR potential {} was built from the fitted G(v) and the given B_v; its \
             levels were found by Numerov integration with Cooley's correction {} and compared with the \
             observed levels ({}). ",
            refs.cite(RKR),
            refs.cite(COOLEY),
            match p.check.chi2_reduced {
                Some(c) => format!("χ²/ν = {c:.3}"),
                None => format!("rms {:.4} cm⁻¹", p.check.rms_cm1),
            }
        ));
    }
    s
}

/// The methods paragraph of an analysis.
pub fn methods(analysis: &Analysis) -> Methods {
    let mut refs = Refs(Vec::new());
    let mut p = String::new();
    match analysis {
        Analysis::Levels(r) => p.push_str(&single_state(r, &mut refs, "")),
        Analysis::Bands(b) => {
            p.push_str(&format!(
                "{} band positions were arranged in a Deslandres array whose difference chains were \
                 checked cell by cell; term values of both states were fitted model-free and then \
                 with Dunham-constrained vibrational terms {} (T00, Te and both states' constants). \
                 The upper state's numbering was tested over offsets −3 … +3{}. ",
                b.input.n_bands,
                refs.cite(DUNHAM),
                if b.isotopologues.len() > 1 {
                    " by a joint fit of the isotopologues with mass-scaled constants"
                } else {
                    ""
                }
            ));
            if let Some(u) = &b.states.upper {
                p.push_str(&single_state(u, &mut refs, "Upper state: "));
            }
            if let Some(l) = &b.states.lower {
                p.push_str(&single_state(l, &mut refs, "Lower state: "));
            }
        }
    }
    let settings = match analysis {
        Analysis::Levels(r) => &r.settings,
        Analysis::Bands(b) => &b.settings,
    };
    let masses = match &settings.mass {
        Some(crate::settings::MassSpec::Nuclides { .. }) => {
            format!(
                ", atomic masses from the AME 2020 evaluation {}",
                refs.cite(AME)
            )
        }
        _ => String::new(),
    };
    p.push_str(&format!(
        "Energies are vacuum wavenumbers; physical constants are the CODATA 2022 values {}{}. All \
         results are model-dependent estimates.",
        refs.cite(CODATA),
        masses
    ));
    Methods {
        paragraph: p,
        references: refs.0,
    }
}

#[cfg(test)]
mod tests {

    /// Method ids become names, whole ids only (the names are this tool's own wording).
    #[test]
    fn method_ids_become_names() {
        assert_eq!(
            in_plain_words(
                "scaled: birge-sponer-linear ×57.965, leroy-bernstein ×7, leroy-bernstein-n-free ×3"
            ),
            "scaled: linear Birge–Sponer ×57.965, LeRoy–Bernstein ×7, LeRoy–Bernstein (n free) ×3"
        );
        assert_eq!(in_plain_words("x-leroy-bernstein"), "x-leroy-bernstein");
        assert_eq!(
            in_plain_words("did not converge (MaxIterations after 400 iterations)"),
            "did not converge (the iteration limit was reached after 400 iterations)"
        );
        assert_eq!(
            method_name("near-dissociation-expansion"),
            "near-dissociation expansion"
        );
    }

    use super::*;

    /// SOURCE: FIPS 180-4 test vector (common knowledge of the standard): SHA-256("abc").
    #[test]
    fn sha256_of_abc() {
        assert_eq!(
            sha256_hex("abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    /// The methods paragraph states the σ-scaling policy in force (common practice, no source:
    /// a methods section says how uncertainties were treated).
    #[test]
    fn paragraph_states_the_sigma_policy() {
        use crate::settings::SigmaScaling;
        let example = crate::examples::example("qz2-low-levels").expect("example");
        for (policy, says) in [
            (SigmaScaling::Never, "The data σ were used as given."),
            (SigmaScaling::WhenAboveOne, "where χ²_ν exceeded 1."),
            (SigmaScaling::Always, "multiplied by √χ²_ν of its own fit. "),
        ] {
            let mut session = example.session();
            session.settings.sigma_scaling = policy;
            session.settings.mc_samples = 0;
            let analysis =
                crate::pipeline::analyze_session(&session, &mut |_, _| {}).expect("analysis");
            let Analysis::Levels(r) = &analysis else {
                panic!("levels");
            };
            let paragraph = &r.methods.as_ref().expect("methods").paragraph;
            assert!(paragraph.contains(says), "{policy:?}: {paragraph}");
        }
    }
}
