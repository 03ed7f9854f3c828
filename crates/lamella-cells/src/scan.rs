//! The candidate test of a neighbour query: which particles of the stencil's index ranges
//! are closer than the radius, each handed to the visitor with its displacement and distance.
//!
//! Two implementations with one result: a portable scan, and on x86-64 processors with
//! AVX-512 one that tests eight candidates per instruction. The vector test computes each
//! squared distance with the same operations in the same order as the portable one
//! (subtraction, minimum image `d − L·round(d/L)` where `|d| > L/2`, products, sums from
//! the first axis on, no fused multiply-add) and IEEE arithmetic rounds each the same way,
//! so both find the same neighbours and hand over the same displacements and distances,
//! bit for bit (tested in `tests/vector_scan.rs`).

#[cfg(target_arch = "x86_64")]
use std::mem::MaybeUninit;

use crate::Vector;

/// Candidates tested per block by the portable scan before the hits go to the visitor.
const SCAN_BLOCK: usize = 64;

/// One neighbour query: the particle, its position, and the squared radius.
#[derive(Clone, Copy)]
pub(crate) struct Query<V> {
    pub i: usize,
    pub xi: V,
    pub radius_squared: f64,
}

/// Visits the candidates `a..b` of each range closer than the radius to `q.xi` (skipping
/// `q.i`), in range order and ascending within a range: `f(j, r_ij, |r_ij|)` with
/// `r_ij = image(x_i − x_j)`.
///
/// Candidates are tested a block at a time without branching and the offsets of the hits
/// collected, so that the visitor (and the square root) runs only for neighbours.
#[inline(always)]
pub(crate) fn scan<V: Vector, F: FnMut(usize, V, f64)>(
    positions: &[V],
    q: Query<V>,
    ranges: &[(u32, u32)],
    image: impl Fn(V) -> V,
    f: &mut F,
) {
    let mut hit_offsets = [0u8; SCAN_BLOCK];
    for &(a, b) in ranges {
        let (mut start, b) = (a as usize, b as usize);
        while start < b {
            let end = (start + SCAN_BLOCK).min(b);
            let block = &positions[start..end];
            let mut hits = 0;
            for (offset, &xj) in block.iter().enumerate() {
                let d2 = image(q.xi - xj).length_squared();
                // `hits <= offset < SCAN_BLOCK`; the mask only spares a bounds check.
                hit_offsets[hits & (SCAN_BLOCK - 1)] = offset as u8;
                hits += usize::from(d2 < q.radius_squared);
            }
            for &offset in &hit_offsets[..hits] {
                let j = start + offset as usize;
                // `get` cannot fail (offsets index `block`) and, unlike indexing, has no
                // panic path, which would force the visitor's state out of registers.
                if let (true, Some(&xj)) = (j != q.i, block.get(offset as usize)) {
                    let r = image(q.xi - xj);
                    f(j, r, r.length_squared().sqrt());
                }
            }
            start = end;
        }
    }
}

/// True when [`scan_avx512`] can run on this processor.
pub(crate) fn avx512_available() -> bool {
    #[cfg(target_arch = "x86_64")]
    {
        std::arch::is_x86_feature_detected!("avx512f")
            && std::arch::is_x86_feature_detected!("popcnt")
    }
    #[cfg(not(target_arch = "x86_64"))]
    {
        false
    }
}

/// Length of the neighbour buffers of one call of the vector test, in 2D and in 3D. From
/// the first range that could overflow the buffer (counting every candidate of the range as
/// kept, with `FOUND_SLACK` to spare) the rest go the portable way. At the usual SPH density
/// a 2D query keeps about 20 from ranges of about 20 candidates, a 3D one about 70 from
/// ranges of about 50, so every range fits. Larger buffers cost time (measured: 192 entries
/// in 2D made the 1e6 benchmark about 10 % slower than 64).
#[cfg(target_arch = "x86_64")]
const FOUND_LENGTH_2D: usize = 64 + FOUND_SLACK;
#[cfg(target_arch = "x86_64")]
const FOUND_LENGTH_3D: usize = 192 + FOUND_SLACK;
/// Slack at the end of the buffers: each test stores whole vectors.
#[cfg(target_arch = "x86_64")]
const FOUND_SLACK: usize = 16;

/// The neighbours one call of [`find_avx512`] found: index and distance. Left uninitialised
/// (zeroing it would cost a tenth of a query); only the entries written are read.
#[cfg(target_arch = "x86_64")]
struct Found<const LENGTH: usize> {
    index: [MaybeUninit<u32>; LENGTH],
    distance: [MaybeUninit<f64>; LENGTH],
}

/// [`scan`] with the candidate test eight at a time in AVX-512 registers (2D and 3D):
/// [`find_avx512`] finds the neighbours and their distances, then the visitor runs here,
/// inlined into the caller, with the displacement recomputed as the portable scan does.
///
/// `period[a]` is the length of periodic axis `a` and zero on the others.
///
/// # Safety
/// The processor must support AVX-512F and POPCNT ([`avx512_available`]).
#[cfg(target_arch = "x86_64")]
#[inline(always)]
pub(crate) unsafe fn scan_avx512<V: Vector, F: FnMut(usize, V, f64)>(
    positions: &[V],
    q: Query<V>,
    ranges: &[(u32, u32)],
    period: [f64; 3],
    image: impl Fn(V) -> V,
    f: &mut F,
) {
    // SAFETY: the caller's conditions.
    unsafe {
        if V::DIM == 2 {
            scan_found::<V, F, FOUND_LENGTH_2D>(positions, q, ranges, period, image, f)
        } else {
            scan_found::<V, F, FOUND_LENGTH_3D>(positions, q, ranges, period, image, f)
        }
    }
}

/// [`scan_avx512`] with neighbour buffers of `LENGTH` entries.
///
/// # Safety
/// As [`scan_avx512`].
#[cfg(target_arch = "x86_64")]
#[inline(always)]
unsafe fn scan_found<V: Vector, F: FnMut(usize, V, f64), const LENGTH: usize>(
    positions: &[V],
    q: Query<V>,
    ranges: &[(u32, u32)],
    period: [f64; 3],
    image: impl Fn(V) -> V,
    f: &mut F,
) {
    let mut found = Found::<LENGTH> {
        index: [MaybeUninit::uninit(); LENGTH],
        distance: [MaybeUninit::uninit(); LENGTH],
    };
    // SAFETY: the caller's conditions are those of `find_avx512`.
    let (count, tested) = unsafe {
        if period.iter().any(|&length| length > 0.0) {
            find_avx512::<V, true, LENGTH>(positions, q, ranges, period, &mut found)
        } else {
            find_avx512::<V, false, LENGTH>(positions, q, ranges, period, &mut found)
        }
    };
    // SAFETY: `find_avx512` wrote the first `count` entries of both arrays.
    let (index, distance) = unsafe {
        (
            std::slice::from_raw_parts(found.index.as_ptr().cast::<u32>(), count),
            std::slice::from_raw_parts(found.distance.as_ptr().cast::<f64>(), count),
        )
    };
    // One pass over the neighbours with no call in between: the visitor's state can stay
    // in registers.
    if let Some(last) = positions.len().checked_sub(1) {
        for (&j, &distance) in index.iter().zip(distance) {
            // Found indices are in `positions`: `min` changes nothing but proves it without
            // a branch or a panic path (either keeps the visitor's state in memory).
            let j = (j as usize).min(last);
            f(j, image(q.xi - positions[j]), distance);
        }
    }
    // Ranges that would not fit in `found` (crowded cells): the portable way.
    scan(positions, q, &ranges[tested..], image, f);
}

/// Writes into `found`, in range order and ascending, the neighbours in `ranges` (every
/// candidate `j != q.i` closer than the radius, by minimum image where `period > 0`) with
/// their distances, and returns how many, with the number of ranges tested: whole ranges
/// only, stopping before one that might not fit in `LENGTH - FOUND_SLACK` entries.
/// `PERIODIC` is whether any `period` is positive (compiled apart, so that bounded domains
/// test no axis for it).
///
/// # Safety
/// The processor must support AVX-512F and POPCNT.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,popcnt")]
unsafe fn find_avx512<V: Vector, const PERIODIC: bool, const LENGTH: usize>(
    positions: &[V],
    q: Query<V>,
    ranges: &[(u32, u32)],
    period: [f64; 3],
    found: &mut Found<LENGTH>,
) -> (usize, usize) {
    use std::arch::x86_64::*;

    let dim = V::DIM;
    let flat = V::flatten(positions);
    let centre: [__m512d; 3] =
        std::array::from_fn(|axis| _mm512_set1_pd(if axis < dim { q.xi.get(axis) } else { 0.0 }));
    let length: [__m512d; 3] = std::array::from_fn(|axis| _mm512_set1_pd(period[axis]));
    let half: [__m512d; 3] = std::array::from_fn(|axis| _mm512_set1_pd(0.5 * period[axis]));
    let periodic: [bool; 3] =
        std::array::from_fn(|axis| PERIODIC && axis < dim && period[axis] > 0.0);
    let radius_squared = _mm512_set1_pd(q.radius_squared);
    let (one, minus_one, point_five) = (
        _mm512_set1_pd(1.0),
        _mm512_set1_pd(-1.0),
        _mm512_set1_pd(0.5),
    );
    // Lanes of the flat components of eight particles, by axis: from loads 0 and 1, then
    // (3D) lanes 6 and 7 from load 2.
    let (first, second) = if dim == 2 {
        (
            [
                _mm512_setr_epi64(0, 2, 4, 6, 8, 10, 12, 14),
                _mm512_setr_epi64(1, 3, 5, 7, 9, 11, 13, 15),
                _mm512_setzero_si512(),
            ],
            [_mm512_setzero_si512(); 3],
        )
    } else {
        (
            [
                _mm512_setr_epi64(0, 3, 6, 9, 12, 15, 0, 0),
                _mm512_setr_epi64(1, 4, 7, 10, 13, 0, 0, 0),
                _mm512_setr_epi64(2, 5, 8, 11, 14, 0, 0, 0),
            ],
            [
                _mm512_setr_epi64(0, 1, 2, 3, 4, 5, 10, 13),
                _mm512_setr_epi64(0, 1, 2, 3, 4, 8, 11, 14),
                _mm512_setr_epi64(0, 1, 2, 3, 4, 9, 12, 15),
            ],
        )
    };
    let lane_offsets = _mm512_setr_epi32(0, 1, 2, 3, 4, 5, 6, 7, 0, 0, 0, 0, 0, 0, 0, 0);
    let mut count = 0;
    let mut tested = 0;
    for &(a, b) in ranges {
        let (a, b) = (a as usize, b as usize);
        // A range may be empty with a > b: a half-stencil query starts it at `first`.
        if count + b.saturating_sub(a) + FOUND_SLACK > LENGTH {
            break;
        }
        tested += 1;
        assert!(b <= positions.len());
        let mut start = a;
        while start < b {
            let base = flat.as_ptr().wrapping_add(start * dim);
            let loads: [__m512d; 3] = if (start + 8) * dim <= flat.len() {
                // SAFETY: the 8 particles from `start` are in `positions`.
                std::array::from_fn(|part| unsafe {
                    if part < dim {
                        _mm512_loadu_pd(base.add(8 * part))
                    } else {
                        _mm512_setzero_pd()
                    }
                })
            } else {
                // The end of the array: masked loads read only the components there are.
                let valid = flat.len() - start * dim;
                // SAFETY: the masks enable exactly the `valid` components from `start`,
                // which are in `positions`; masked-off lanes are not read.
                std::array::from_fn(|part| unsafe {
                    let lanes = valid.saturating_sub(8 * part).min(8);
                    _mm512_maskz_loadu_pd(((1u32 << lanes) - 1) as u8, base.wrapping_add(8 * part))
                })
            };
            let mut d2 = _mm512_setzero_pd();
            for axis in 0..dim {
                let mut x = _mm512_permutex2var_pd(loads[0], first[axis], loads[1]);
                if dim > 2 {
                    x = _mm512_permutex2var_pd(x, second[axis], loads[2]);
                }
                let mut d = _mm512_sub_pd(centre[axis], x);
                if periodic[axis] {
                    // As `fold`: `d − L·round(d/L)` where `|d| > L/2`, rounding half away
                    // from zero (truncate, then step away when the remainder is ≥ 1/2).
                    let far = _mm512_cmp_pd_mask::<_CMP_GT_OQ>(_mm512_abs_pd(d), half[axis]);
                    if far != 0 {
                        let ratio = _mm512_div_pd(d, length[axis]);
                        let whole = _mm512_roundscale_pd::<
                            { _MM_FROUND_TO_ZERO | _MM_FROUND_NO_EXC },
                        >(ratio);
                        let step = _mm512_cmp_pd_mask::<_CMP_GE_OQ>(
                            _mm512_abs_pd(_mm512_sub_pd(ratio, whole)),
                            point_five,
                        );
                        let negative = _mm512_cmp_pd_mask::<_CMP_LT_OQ>(ratio, _mm512_setzero_pd());
                        let away = _mm512_mask_blend_pd(negative, one, minus_one);
                        let rounded = _mm512_mask_add_pd(whole, step, whole, away);
                        d = _mm512_mask_sub_pd(d, far, d, _mm512_mul_pd(length[axis], rounded));
                    }
                }
                let square = _mm512_mul_pd(d, d);
                d2 = if axis == 0 {
                    square
                } else {
                    _mm512_add_pd(d2, square)
                };
            }
            let mut candidates = ((1u32 << (b - start).min(8)) - 1) as u8;
            let own = q.i.wrapping_sub(start);
            if own < 8 {
                candidates &= !(1u8 << own);
            }
            let mask = _mm512_mask_cmp_pd_mask::<_CMP_LT_OQ>(candidates, d2, radius_squared);
            let indices = _mm512_add_epi32(_mm512_set1_epi32(start as i32), lane_offsets);
            // Compress in a register, then store whole vectors (a compressing store to
            // memory is much slower). `count` stays below `LENGTH - FOUND_SLACK` (checked
            // per range), so the whole vectors fit in the slack.
            let packed = _mm512_maskz_compress_epi32(u16::from(mask), indices);
            let squares = _mm512_maskz_compress_pd(mask, d2);
            let index_slot = &mut found.index[count..count + 16];
            let square_slot = &mut found.distance[count..count + 8];
            // SAFETY: the slots hold 16 `u32` and 8 `f64`, the 64 bytes stored in each.
            unsafe {
                _mm512_storeu_si512(index_slot.as_mut_ptr().cast(), packed);
                _mm512_storeu_pd(square_slot.as_mut_ptr().cast(), squares);
            }
            count += mask.count_ones() as usize;
            start += 8;
        }
    }
    // Squared distances to distances, eight at a time (correctly rounded, as `f64::sqrt`);
    // the last vector masked to the entries written.
    for first in (0..count).step_by(8) {
        let lanes = ((1u32 << (count - first).min(8)) - 1) as u8;
        let slot = &mut found.distance[first..first + 8];
        // SAFETY: `slot` holds 8 entries, of which the masked ones were written above.
        unsafe {
            let squares = _mm512_maskz_loadu_pd(lanes, slot.as_ptr().cast());
            _mm512_mask_storeu_pd(slot.as_mut_ptr().cast(), lanes, _mm512_sqrt_pd(squares));
        }
    }
    (count, tested)
}
