//! The readers of our own files never panic: a snapshot (`.vtp`) and a checkpoint, edited byte
//! by byte, cut short at every length and damaged at random, always give a value or an error.
//! Deterministic (a fixed xorshift seed), about 40,000 cases, a few seconds in release.

use std::panic::{AssertUnwindSafe, catch_unwind};

use glam::DVec2;
use lamella_run::output::checkpoint::{ArrayData, Value, checksum, decode, encode};
use lamella_run::output::{Checkpoint, SnapshotMeta, parse_snapshot, write_snapshot};
use lamella_sph::{Kind, Particles};

/// Bytes a one-byte edit puts in: digits, XML markup, base64 padding, a non-UTF-8 byte.
const EDITS: [u8; 12] = [
    b'0', b'9', b'-', b'"', b'<', b'>', b'/', b'=', b' ', b'A', 0x00, 0xFF,
];

fn state(n: usize) -> Particles<DVec2> {
    let at = |i: usize| DVec2::new(i as f64 * 1e-4, (i % 3) as f64 * 1e-4);
    Particles {
        position: (0..n).map(at).collect(),
        velocity: (0..n).map(|i| DVec2::new(i as f64 * 1e-3, -1e-3)).collect(),
        density: (0..n).map(|i| 1000.0 + i as f64).collect(),
        pressure: vec![0.5; n],
        mass: vec![1e-5; n],
        viscosity: vec![1e-3; n],
        phase: (0..n).map(|i| (i % 2) as u16).collect(),
        kind: (0..n)
            .map(|i| if i < 2 { Kind::Wall } else { Kind::Fluid })
            .collect(),
        id: (0..n as u64).collect(),
        initial_position: (0..n).map(at).collect(),
    }
}

/// Deterministic pseudo-random numbers (xorshift64).
struct Random(u64);

impl Random {
    fn below(&mut self, n: usize) -> usize {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        (self.0 % n as u64) as usize
    }
}

/// Runs `read` on every input `cases` yields; returns the descriptions of inputs that panicked
/// and how many inputs were refused.
fn fuzz(
    cases: impl Iterator<Item = (String, Vec<u8>)>,
    read: impl Fn(&[u8]) -> bool,
) -> (Vec<String>, usize, usize) {
    let mut panicked = Vec::new();
    let (mut total, mut refused) = (0, 0);
    for (what, bytes) in cases {
        total += 1;
        match catch_unwind(AssertUnwindSafe(|| read(&bytes))) {
            Ok(true) => {}
            Ok(false) => refused += 1,
            Err(_) => panicked.push(what),
        }
    }
    (panicked, total, refused)
}

/// Every one-byte edit of `bytes` at the positions `positions`, every truncation, and `random`
/// inputs with one to four random bytes changed.
fn mutations(
    bytes: &[u8],
    positions: Vec<usize>,
    random: usize,
) -> impl Iterator<Item = (String, Vec<u8>)> + '_ {
    let edits = positions.into_iter().flat_map(move |at| {
        EDITS.iter().map(move |&b| {
            let mut m = bytes.to_vec();
            m[at] = b;
            (format!("byte {at} set to {b:#04x}"), m)
        })
    });
    let cuts =
        (0..bytes.len()).map(move |len| (format!("cut to {len} bytes"), bytes[..len].to_vec()));
    let mut rng = Random(0x9e37_79b9_7f4a_7c15);
    let noise = (0..random).map(move |k| {
        let mut m = bytes.to_vec();
        for _ in 0..1 + rng.below(4) {
            let at = rng.below(m.len());
            m[at] = rng.below(256) as u8;
        }
        (format!("random damage {k}"), m)
    });
    edits.chain(cuts).chain(noise)
}

#[test]
fn the_snapshot_reader_never_panics_on_edited_or_cut_files() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("state_000001.vtp");
    let n = 12;
    let meta = SnapshotMeta {
        time: 0.25,
        step: 40,
        case_name: "fuzz".into(),
    };
    write_snapshot(&path, &state(n), &[0.5; 12], &meta).unwrap();
    let bytes = std::fs::read(&path).unwrap();
    let whole = parse_snapshot(&bytes).unwrap();
    assert_eq!((whole.len(), whole.meta.clone()), (n, meta));

    // Every byte of the XML markup (outside the base64 payloads), and every tenth of the rest.
    let mut in_payload = false;
    let mut positions = Vec::new();
    for (at, &b) in bytes.iter().enumerate() {
        match b {
            b'>' => in_payload = true,
            b'<' => in_payload = false,
            _ => {}
        }
        if !in_payload || at % 10 == 0 {
            positions.push(at);
        }
    }
    let (panicked, total, refused) = fuzz(mutations(&bytes, positions, 3000), |b| {
        match parse_snapshot(b) {
            Ok(s) => {
                // What it accepts is whole: every array has one entry per point.
                assert!(
                    [s.velocity.len(), s.density.len(), s.id.len(), s.kind.len()]
                        .iter()
                        .all(|&len| len == s.len())
                );
                true
            }
            Err(reason) => {
                assert!(!reason.is_empty());
                false
            }
        }
    });
    assert!(total > 20_000, "only {total} cases");
    assert!(
        panicked.is_empty(),
        "{} of {total} panicked: {:?}",
        panicked.len(),
        &panicked[..panicked.len().min(20)]
    );
    // Most edits are caught (the rest change a digit of a value or an ignored attribute).
    assert!(refused > total / 2, "only {refused} of {total} refused");
}

fn checkpoint() -> Checkpoint<DVec2> {
    Checkpoint {
        time: 0.5,
        step: 99,
        case_name: "fuzz".into(),
        case_checksum: checksum(b"(case)"),
        particles: state(5),
        values: vec![("next_snapshot_time".into(), Value::F64(0.6))],
        arrays: vec![(
            "shift".into(),
            ArrayData::F64 {
                components: 2,
                values: vec![0.0; 10],
            },
        )],
    }
}

/// `body` with a valid checksum appended, so the edit reaches the structure checks.
fn sealed(mut body: Vec<u8>) -> Vec<u8> {
    let crc = checksum(&body);
    body.extend_from_slice(&crc.to_le_bytes());
    body
}

#[test]
fn the_checkpoint_reader_never_panics_even_when_the_checksum_is_made_to_match() {
    let bytes = encode(&checkpoint());
    assert_eq!(decode::<DVec2>(&bytes).unwrap(), checkpoint());
    let body = bytes[..bytes.len() - 4].to_vec();
    let positions = (0..body.len()).collect();
    // Edited and cut bodies, resealed; and the raw file damaged (the checksum catches those).
    let resealed = mutations(&body, positions, 3000).map(|(what, b)| (what, sealed(b)));
    let raw = mutations(&bytes, Vec::new(), 2000);
    let (panicked, total, refused) = fuzz(resealed.chain(raw), |b| decode::<DVec2>(b).is_ok());
    assert!(total > 10_000, "only {total} cases");
    assert!(
        panicked.is_empty(),
        "{} of {total} panicked: {:?}",
        panicked.len(),
        &panicked[..panicked.len().min(20)]
    );
    // A resealed edit of a value's bytes is a valid checkpoint of other values: a third is enough.
    assert!(refused > total / 3, "only {refused} of {total} refused");
}
