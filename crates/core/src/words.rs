//! Words for people: the short name of each method by its id, and the analyses' messages with
//! method ids and solver names written as plain words. A leaf module, so the report and the
//! stages that fill it can both use it.

/// Short names of the methods for people, by method id (the ids stay in the JSON document).
const METHOD_NAMES: &[(&str, &str)] = &[
    ("observed-sum", "observed sum"),
    ("birge-sponer-linear", "linear Birge–Sponer"),
    ("birge-sponer-curved", "curved Birge–Sponer"),
    (
        "leroy-bernstein-known-asymptote",
        "LeRoy–Bernstein (asymptote given)",
    ),
    ("leroy-bernstein-cn-fixed", "LeRoy–Bernstein (C_n given)"),
    ("leroy-bernstein-n-free", "LeRoy–Bernstein (n free)"),
    (
        "leroy-bernstein-alt-levels",
        "LeRoy–Bernstein (other top levels)",
    ),
    ("leroy-bernstein", "LeRoy–Bernstein"),
    (
        "near-dissociation-expansion-cn-fixed",
        "near-dissociation expansion (C_n given)",
    ),
    ("near-dissociation-expansion", "near-dissociation expansion"),
    (
        "potential-fit-mlr-cn-fixed",
        "fitted MLR potential (C_n given)",
    ),
    ("potential-fit-mlr", "fitted MLR potential"),
];

/// The short name of a method for people (`"linear Birge–Sponer"`); an unknown id as it is.
pub fn method_name(id: &str) -> &str {
    METHOD_NAMES
        .iter()
        .find(|(k, _)| *k == id)
        .map_or(id, |(_, name)| name)
}

/// `text` with every method id written as its name, and setting names as plain words, for
/// messages made by the analyses that a person reads.
pub fn in_plain_words(text: &str) -> String {
    let mut out = text.replace(
        "(its sigma_scale)",
        "(the factor is shown with each method)",
    );
    // How an iterative fit stopped, in words rather than the solver's names for it.
    for (name, words) in [
        ("MaxIterations", "the iteration limit was reached"),
        ("NoProgress", "no step improved the fit"),
        ("InvalidStart", "no usable starting point"),
        ("ParametersConverged", "converged"),
        ("ChiSquareConverged", "converged"),
        ("GradientConverged", "converged"),
        ("ExactFit", "exact fit"),
    ] {
        out = out.replace(name, words);
    }
    // Longest ids first (they are listed so), and only whole ids: "leroy-bernstein" inside
    // "leroy-bernstein-n-free" has been replaced already.
    for (id, name) in METHOD_NAMES {
        let mut result = String::with_capacity(out.len());
        let mut rest = out.as_str();
        while let Some(i) = rest.find(id) {
            let before = rest[..i].chars().next_back();
            let after = rest[i + id.len()..].chars().next();
            let part_of_word =
                |c: Option<char>| c.is_some_and(|c| c.is_alphanumeric() || c == '-' || c == '_');
            result.push_str(&rest[..i]);
            if part_of_word(before) || part_of_word(after) {
                result.push_str(id);
            } else {
                result.push_str(name);
            }
            rest = &rest[i + id.len()..];
        }
        result.push_str(rest);
        out = result;
    }
    out
}
