//! Sorting through one shared routine, to keep the browser module small.
//!
//! Each `sort_by` / `sort_by_key` / `sort` call compiles the standard library's sort anew for
//! its element type and closure: a few kilobytes of wasm per call site. These functions sort a
//! list of indices with a `dyn` comparator instead, so every caller shares one compiled sort, and
//! then move the elements into that order. The result is exactly that of the standard stable
//! sort: a stable sort has one possible outcome (equal elements keep their input order), and for
//! types whose equal values are indistinguishable (integers, tuples of them) it is also the
//! outcome of `sort_unstable`.

use std::cmp::Ordering;

/// Sorts `v` stably with `compare`, like `slice::sort_by`.
pub(crate) fn sort_by<T>(v: &mut Vec<T>, mut compare: impl FnMut(&T, &T) -> Ordering) {
    let order = stable_order(v.len(), &mut |a, b| compare(&v[a], &v[b]));
    let mut slots: Vec<Option<T>> = v.drain(..).map(Some).collect();
    v.extend(order.into_iter().filter_map(|i| slots[i].take()));
}

/// Sorts `v` stably by `key`, like `slice::sort_by_key`.
pub(crate) fn sort_by_key<T, K: Ord>(v: &mut Vec<T>, mut key: impl FnMut(&T) -> K) {
    sort_by(v, |a, b| key(a).cmp(&key(b)));
}

/// Sorts `v` in ascending order, like `slice::sort` (and, for integers and tuples of them,
/// like `slice::sort_unstable`).
pub(crate) fn sort<T: Ord>(v: &mut Vec<T>) {
    sort_by(v, T::cmp);
}

/// The indices `0..n` in stable sorted order under `compare` (the one compiled sort).
fn stable_order(n: usize, compare: &mut dyn FnMut(usize, usize) -> Ordering) -> Vec<usize> {
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&a, &b| compare(a, b));
    order
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        /// SOURCE: the standard library's stable sort, which these functions must reproduce
        /// exactly (same order of equal keys).
        #[test]
        fn same_order_as_the_standard_stable_sort(
            v in proptest::collection::vec((0u8..6, any::<u16>()), 0..200)
        ) {
            let mut expected = v.clone();
            expected.sort_by_key(|p| p.0);
            let mut got = v.clone();
            sort_by_key(&mut got, |p| p.0);
            prop_assert_eq!(&got, &expected);

            let mut expected = v.clone();
            let compare = |a: &(u8, u16), b: &(u8, u16)| (a.1 % 7).cmp(&(b.1 % 7)).then(b.0.cmp(&a.0));
            expected.sort_by(compare);
            let mut got = v.clone();
            sort_by(&mut got, compare);
            prop_assert_eq!(&got, &expected);

            let mut expected = v.clone();
            expected.sort_unstable();
            let mut got = v;
            sort(&mut got);
            prop_assert_eq!(got, expected);
        }
    }
}
