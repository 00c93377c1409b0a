//! The device configuration blob (`src/config_blob.rs`): round trip,
//! every truncation length and every single-bit flip of a sample blob (the
//! invented demo train), wrong version, invalid content; a refused blob
//! leaves the running train as it was. CRC-32 catching every single-bit
//! error is a property of the code (Koopman, DSN 2002); this test checks
//! that the decoder actually relies on it.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

use polytrope::config_blob::{
    apply, decode, decode_train, encode, BlobError, HeatCapacityBlob, TrainBlob, MAX_BLOB_LEN,
    VERSION,
};
use polytrope::demo;
use polytrope::gas::{HeatCapacity, IdealGas, CARBON_DIOXIDE};
use polytrope::real::Real;
use polytrope::train::{Train, TrainConfig};
use polytrope::Problem;

/// The demo train's stages on a constant-k ideal CO2 (the blob carries an
/// ideal gas; the demo itself runs Peng–Robinson, which the blob format does
/// not describe).
fn ideal_demo_config<T: Real>() -> TrainConfig<T, IdealGas<T>, { demo::STAGES }> {
    let cfg = demo::config::<T>().unwrap();
    TrainConfig {
        gas: IdealGas::new(
            T::of(CARBON_DIOXIDE.molar_mass),
            HeatCapacity::ConstantK(T::of(CARBON_DIOXIDE.k)),
            T::ONE,
        )
        .unwrap(),
        stages: cfg.stages,
        max_interstage_pressure_drop: cfg.max_interstage_pressure_drop,
        steady_state: cfg.steady_state,
    }
}

fn ideal_demo_train() -> Train<f32, IdealGas<f32>, { demo::STAGES }, { demo::WINDOW }> {
    Train::new(ideal_demo_config::<f32>()).unwrap()
}

fn sample() -> (TrainBlob, Vec<u8>) {
    let cfg = ideal_demo_config::<f32>();
    let blob = TrainBlob::from_config(
        &cfg,
        CARBON_DIOXIDE.molar_mass,
        HeatCapacityBlob::ConstantK(CARBON_DIOXIDE.k as f32),
    )
    .unwrap();
    let mut buf = [0u8; MAX_BLOB_LEN];
    let n = encode(&blob, &mut buf).unwrap();
    (blob, buf[..n].to_vec())
}

/// Recomputes the checksum after editing a blob (CRC-32/ISO-HDLC, `crc` crate).
fn reseal(b: &mut [u8]) {
    let n = b.len() - 4;
    let crc = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC).checksum(&b[..n]);
    b[n..].copy_from_slice(&crc.to_le_bytes());
}

#[test]
fn round_trip_gives_the_host_configuration() {
    let (blob, bytes) = sample();
    println!("demo train blob: {} bytes", bytes.len());
    assert!(bytes.len() <= 256, "{}", bytes.len());
    assert_eq!(decode(&bytes).unwrap(), blob);
    let train = decode_train::<f32, { demo::STAGES }, { demo::WINDOW }>(&bytes).unwrap();
    assert_eq!(*train.config(), ideal_demo_config::<f32>());
    // The f64 reference build reads the same blob.
    assert!(decode_train::<f64, { demo::STAGES }, { demo::WINDOW }>(&bytes).is_ok());
}

#[test]
fn every_truncation_is_refused() {
    let (_, bytes) = sample();
    for len in 0..bytes.len() {
        let e = decode_train::<f32, { demo::STAGES }, { demo::WINDOW }>(&bytes[..len]);
        assert_eq!(e.err(), Some(BlobError::Truncated), "length {len}");
    }
    let mut long = bytes.clone();
    long.push(0);
    assert_eq!(decode(&long).err(), Some(BlobError::TrailingBytes));
}

#[test]
fn every_single_bit_flip_is_refused_and_keeps_the_running_train() {
    let (_, bytes) = sample();
    let mut train = ideal_demo_train();
    for i in 0..30 {
        train.update(&demo::scan(i));
    }
    let before_cfg = *train.config();
    let before_snap = *train.snapshot();
    let mut kinds = [0usize; 3];
    for byte in 0..bytes.len() {
        for bit in 0..8 {
            let mut b = bytes.clone();
            b[byte] ^= 1 << bit;
            let e = apply(&mut train, &b).unwrap_err();
            match e {
                BlobError::BadMagic => kinds[0] += 1,
                BlobError::ChecksumMismatch => kinds[1] += 1,
                BlobError::Truncated | BlobError::TrailingBytes => kinds[2] += 1,
                other => panic!("byte {byte} bit {bit}: unexpected {other:?}"),
            }
            assert_eq!(*train.config(), before_cfg);
            assert_eq!(*train.snapshot(), before_snap);
        }
    }
    // 32 magic bits; 16 length bits change the framing; every other flip
    // (version, payload, checksum) is caught by the checksum.
    assert_eq!(kinds, [32, 8 * bytes.len() - 48, 16]);
}

#[test]
fn wrong_version_bad_content_and_wrong_stage_count_are_typed_errors() {
    let (blob, bytes) = sample();
    let mut b = bytes.clone();
    b[4..6].copy_from_slice(&(VERSION + 1).to_le_bytes());
    reseal(&mut b);
    assert_eq!(
        decode(&b).err(),
        Some(BlobError::UnsupportedVersion { found: VERSION + 1 })
    );
    // Valid framing, invalid train: stage 3's discharge below its suction.
    let mut bad = blob;
    bad.stages[2].design_discharge_pressure = bad.stages[2].design_suction_pressure * 0.5;
    let mut buf = [0u8; MAX_BLOB_LEN];
    let n = encode(&bad, &mut buf).unwrap();
    let mut train = ideal_demo_train();
    let before = *train.config();
    match apply(&mut train, &buf[..n]) {
        Err(BlobError::Config(e)) => {
            assert_eq!(e.field, "stages.design_discharge_pressure");
            assert_eq!(e.index, Some(2));
            assert!(matches!(e.problem, Problem::NotAbove { .. }));
        }
        other => panic!("{other:?}"),
    }
    assert_eq!(*train.config(), before);
    // Stage count of another train type.
    assert_eq!(
        decode_train::<f32, 3, 8>(&bytes).err(),
        Some(BlobError::StageCount {
            found: 5,
            expected: 3
        })
    );
    // A valid blob of a changed train is taken.
    let mut changed = blob;
    changed.max_interstage_pressure_drop = 0.05;
    let n = encode(&changed, &mut buf).unwrap();
    apply(&mut train, &buf[..n]).unwrap();
    assert_eq!(train.config().max_interstage_pressure_drop, 0.05);
    // Too small an output buffer is an error, not a panic.
    assert_eq!(
        encode(&blob, &mut [0u8; 20]).err(),
        Some(BlobError::BufferTooSmall)
    );
}
