//! Reordering particle arrays by the cell list's permutation.

use rayon::prelude::*;

/// Reorders `data` so that `data[k]` becomes the old `data[perm[k]]`, using `scratch` as the
/// buffer (both keep their allocations for the next call). Parallel.
///
/// Panics if `perm` and `data` differ in length or `perm` holds an index out of range.
pub fn apply_permutation<T: Copy + Send + Sync>(
    perm: &[u32],
    data: &mut Vec<T>,
    scratch: &mut Vec<T>,
) {
    assert_eq!(
        perm.len(),
        data.len(),
        "permutation of {} entries applied to an array of {}",
        perm.len(),
        data.len()
    );
    scratch.clear();
    let source = &data[..];
    scratch.par_extend(perm.par_iter().map(|&old| source[old as usize]));
    std::mem::swap(data, scratch);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gathers_by_old_index() {
        let mut data = vec![10, 20, 30, 40];
        let mut scratch = Vec::new();
        apply_permutation(&[2, 0, 3, 1], &mut data, &mut scratch);
        assert_eq!(data, vec![30, 10, 40, 20]);
    }
}
