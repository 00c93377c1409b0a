use super::*;
use crate::demo;
use crate::scan::Scan;
use crate::signal::{ChannelStatus, FaultCode};
use std::vec::Vec;

const N: usize = demo::STAGES;
const R: usize = image_len(N, 1, 1);
type Image = RegisterImage<N, 1, 1, R>;

fn surge_view(margin: f32, events: u32, trip: bool) -> SurgeView<f32> {
    let mut state = SurgeState::bad();
    state.margin = Measured::good(margin);
    state.clearance = Measured::new(margin - 0.1, Quality::Uncertain);
    SurgeView {
        state,
        detection: DetectionState {
            surge_this_scan: false,
            event_count: events,
            events_in_window: 0,
            added_margin: 0.02,
            trip_request: trip,
            blind: false,
            armed: true,
        },
    }
}

fn channel(q: Quality) -> ChannelOutput<f32> {
    ChannelOutput {
        raw: Measured::new(2.0e5, q),
        filtered: Measured::new(1.99e5, q),
        status: ChannelStatus {
            channel: 1,
            quality: q,
            fault: if q == Quality::Good {
                FaultCode::None
            } else {
                FaultCode::Spike
            },
            substituted: q == Quality::Uncertain,
            last_good_ms: 40,
        },
    }
}

/// Every value the kernel reports, as (block, instance, key) -> (value,
/// quality code), straight from the result types' visitors.
fn expected(
    s: &Snapshot<f32, N>,
    surge: &SurgeView<f32>,
    ch: &ChannelOutput<f32>,
) -> Vec<(&'static str, usize, &'static str, u32, u16)> {
    let mut out = Vec::new();
    let mut push = |block, inst, spec: &FieldSpec, v: FieldValue<f32>| {
        let (bits, q) = match v {
            FieldValue::Real(m) => (m.value.to_bits(), quality_code(m.quality)),
            FieldValue::Plain(x) => (x.to_bits(), 0),
            FieldValue::Count(n) => (n, 0),
            _ => return,
        };
        out.push((block, inst, spec.key, bits, q));
    };
    for (i, st) in s.stages.iter().enumerate() {
        match &st.work {
            StageWork::Compressor(c) => c.visit_fields(&mut |f, v| push("stage", i + 1, f, v)),
            StageWork::Pump(p) => p.visit_fields(&mut |f, v| push("stage", i + 1, f, v)),
        }
        st.steady_state
            .visit_fields(&mut |f, v| push("stage", i + 1, f, v));
    }
    for (i, c) in s.coolers.iter().enumerate() {
        if let Some(c) = c {
            c.visit_fields(&mut |f, v| push("cooler", i + 1, f, v));
        }
    }
    for (i, p) in s.interstage.iter().enumerate() {
        if let Some(p) = p {
            p.visit_fields(&mut |f, v| push("interstage", i + 1, f, v));
        }
    }
    s.totals.visit_fields(&mut |f, v| push("totals", 0, f, v));
    surge.state.visit_fields(&mut |f, v| push("surge", 1, f, v));
    surge
        .detection
        .visit_fields(&mut |f, v| push("surge", 1, f, v));
    ch.visit_fields(&mut |f, v| push("channel", 1, f, v));
    out
}

fn packed(order: WordOrder, scan: &Scan<f32, N>) -> (Image, Snapshot<f32, N>) {
    let mut train = demo::train::<f32>().unwrap();
    let snap = *train.update(scan);
    let mut image = Image::new(order, 0xDEAD_BEEF);
    image.pack(
        &snap,
        &[surge_view(0.25, 0, false)],
        &[channel(Quality::Good)],
    );
    (image, snap)
}

/// Every value row of the generated map holds, at its address and in its
/// quality bits, exactly the value and quality the kernel's result types
/// report: the map and the packer cannot drift apart. A consistency check
/// (the project's own types on both sides).
#[test]
fn every_map_row_holds_the_kernel_value_in_both_word_orders() {
    for order in [WordOrder::HighWordFirst, WordOrder::LowWordFirst] {
        let (image, snap) = packed(order, &demo::scan(3));
        let regs = image.registers();
        let exp = expected(&snap, &surge_view(0.25, 0, false), &channel(Quality::Good));
        let mut checked = 0;
        let mut pump_slots = 0;
        visit_map(N, 1, 1, &mut |r| {
            let Some((qa, qs)) = r.quality else { return };
            let pump = r.block == "stage" && r.instance == N;
            let key = match (pump, r.pump) {
                (true, Some(p)) => p.key,
                _ => r.key,
            };
            let code = (regs[qa] >> qs) & 3;
            let got = order.join([regs[r.address], regs[r.address + 1]]);
            match exp
                .iter()
                .find(|e| e.0 == r.block && e.1 == r.instance && e.2 == key)
            {
                Some(&(_, _, _, bits, q)) => {
                    assert_eq!(got, bits, "{} {} {key}", r.block, r.instance);
                    assert_eq!(code, q, "{} {} {key}", r.block, r.instance);
                    checked += 1;
                }
                None => {
                    // Not in use: a cooler after the pump, the pump's
                    // spare slots, the interstage after the last compressor.
                    assert_eq!(
                        code,
                        quality_code::NOT_APPLICABLE,
                        "{} {} {key} {} {:?}",
                        r.block,
                        r.instance,
                        r.address,
                        r.quality
                    );
                    assert_eq!(got, 0);
                    pump_slots += 1;
                }
            }
        });
        // Every value the kernel reports is somewhere in the image.
        assert_eq!(checked, exp.len());
        assert!(pump_slots > 0);
        assert_eq!(
            order.join([regs[header::SCAN_COUNT], regs[header::SCAN_COUNT + 1]]),
            1
        );
        let t = Image::LAYOUT.trailer;
        assert_eq!(order.join([regs[t], regs[t + 1]]), 1);
        assert_eq!(order.join([regs[6], regs[7]]), 0xDEAD_BEEF);
        assert_eq!(regs[header::WORD_ORDER], order.code());
        assert_eq!(usize::from(regs[header::IMAGE_REGISTERS]), R);
    }
}

#[test]
fn word_orders_differ_only_by_swapping_the_pairs() {
    let (a, _) = packed(WordOrder::HighWordFirst, &demo::scan(7));
    let (b, _) = packed(WordOrder::LowWordFirst, &demo::scan(7));
    let (a, b) = (a.registers(), b.registers());
    let mut pairs = 0;
    visit_map(N, 1, 1, &mut |r| {
        let x = r.address;
        if r.registers == 2 {
            assert_eq!([a[x], a[x + 1]], [b[x + 1], b[x]], "{}", r.key);
            pairs += 1;
        } else if r.key != "word_order" && r.table == "input" {
            assert_eq!(a[x], b[x], "{} {}", r.block, r.key);
        }
    });
    assert!(pairs > 100);
}

#[test]
fn map_covers_every_register_once() {
    let mut seen = [0u8; R];
    visit_map(N, 1, 1, &mut |r| {
        if r.table == "input" {
            for n in &mut seen[r.address..r.address + usize::from(r.registers)] {
                *n += 1;
            }
        }
    });
    assert!(seen.iter().all(|&n| n == 1), "{seen:?}");
    // Blocks and 32-bit values start on even addresses.
    visit_map(N, 1, 1, &mut |r| {
        if r.encoding == Encoding::F32 || r.encoding == Encoding::U32 || r.key == "status" {
            assert_eq!(r.address % 2, 0, "{} {}", r.block, r.key);
        }
    });
}

#[test]
fn status_words_carry_kind_presence_condition_and_flags() {
    let (image, snap) = packed(WordOrder::HighWordFirst, &demo::scan(3));
    let l = Image::LAYOUT;
    let regs = image.registers();
    let stage = |i: usize| regs[l.stages + i * block_len(STAGE_SLOTS)];
    for i in 0..4 {
        assert_eq!(stage(i) & derived::STAGE_PUMP, 0);
        // The demo's fourth stage (26 -> 80 bar a CO2) runs near the critical
        // point, where the Peng–Robinson model flags its results uncertain.
        let want = if i == 3 {
            quality_code::UNCERTAIN
        } else {
            quality_code::GOOD
        };
        assert_eq!(stage(i) & 3, want, "stage {i}");
    }
    assert_ne!(stage(4) & derived::STAGE_PUMP, 0);
    let cooler = |i: usize| regs[l.coolers + i * block_len(COOLER_SLOTS)];
    for i in 0..4 {
        assert_ne!(cooler(i) & STATUS_PRESENT, 0);
    }
    assert_eq!(cooler(4) & STATUS_PRESENT, 0);
    assert_eq!(cooler(4) & 3, quality_code::NOT_APPLICABLE);
    // The last intercooler's next-stage temperature rise does not apply (a
    // pump follows): its slot says so, and the block's worst quality is
    // over the values that apply.
    let c4 = snap.coolers[3].unwrap();
    assert_eq!(
        c4.next_stage_temperature_rise.quality,
        Quality::NotApplicable
    );
    let slot = slot_of(
        <CoolerResult<f32> as ResultFields<f32>>::FIELDS,
        "next_stage_temperature_rise_K",
    )
    .unwrap();
    let base = l.coolers + 3 * block_len(COOLER_SLOTS);
    assert_eq!(slot_quality(regs, base, slot), quality_code::NOT_APPLICABLE);
    // The aftercooler takes the near-critical CO2 of the fourth stage into
    // the dense phase, where the Peng–Robinson model flags uncertain.
    assert_eq!(cooler(3) & 3, quality_code::UNCERTAIN);
    let inter = |i: usize| regs[l.interstage + i * block_len(INTERSTAGE_SLOTS)];
    for i in 0..N {
        assert_eq!(inter(i) & STATUS_PRESENT != 0, snap.interstage[i].is_some());
    }
    // A bad discharge temperature: condition input-bad, quality bad.
    let mut scan = demo::scan(3);
    scan.stages[1].discharge_temperature.quality = Quality::Bad;
    let (image, snap) = packed(WordOrder::HighWordFirst, &scan);
    let regs = image.registers();
    let s2 = regs[l.stages + block_len(STAGE_SLOTS)];
    let cond = snap.stages[1].compressor().unwrap().condition;
    assert_eq!(
        (s2 >> STATUS_CODE_SHIFT) & 0xF,
        u16::from(stage_condition_code(cond))
    );
    assert_eq!(cond, StageCondition::InputBad);
    assert_eq!(s2 & 3, quality_code::BAD);
    assert_eq!(regs[header::SUMMARY] & 3, quality_code::BAD);
}

#[test]
fn scaled_block_rounds_saturates_and_marks_bad() {
    let (image, snap) = packed(WordOrder::HighWordFirst, &demo::scan(3));
    let l = Image::LAYOUT;
    let regs = image.registers();
    let c = snap.stages[0].compressor().unwrap();
    let ratio = regs[l.scaled] as i16;
    assert_eq!(ratio, (c.pressure_ratio.value * 1000.0).round() as i16);
    let eta = regs[l.scaled + 1] as i16;
    assert_eq!(
        eta,
        (c.polytropic_efficiency.value * 10000.0).round() as i16
    );
    let kw = WordOrder::HighWordFirst.join([regs[l.scaled + 3], regs[l.scaled + 4]]) as i32;
    assert_eq!(kw, (c.gas_power.value / 1000.0).round() as i32);
    // The pump has no polytropic efficiency: no value.
    let pump = l.scaled + 4 * scaled_len(SCALED_STAGE);
    assert_eq!(regs[pump + 1] as i16, SCALED_NO_VALUE_I16);
    assert_ne!(regs[pump] as i16, SCALED_NO_VALUE_I16);
    // Saturation and rounding.
    assert_eq!(scale_round(10.0, 10000.0, 32767), 32767);
    assert_eq!(scale_round(-10.0, 10000.0, 32767), -32767);
    assert_eq!(scale_round(0.81236, 10000.0, 32767), 8124);
    assert_eq!(scale_round(-0.00006, 10000.0, 32767), -1);
    assert_eq!(scale_round(3.0e9, 1.0, i32::MAX), i32::MAX);
    assert_eq!(scale_round(-3.0e9, 1.0, i32::MAX), -i32::MAX);
    // A bad surge margin: sentinel.
    let mut train = demo::train::<f32>().unwrap();
    let snap = *train.update(&demo::scan(1));
    let mut image = Image::new(WordOrder::HighWordFirst, 0);
    let mut s = surge_view(0.2, 0, false);
    s.state.margin = Measured::bad();
    image.pack(&snap, &[s], &[channel(Quality::Bad)]);
    let at = l.scaled + N * scaled_len(SCALED_STAGE) + scaled_len(SCALED_TOTALS);
    assert_eq!(image.registers()[at] as i16, SCALED_NO_VALUE_I16);
    let ch = at + scaled_len(SCALED_SURGE);
    let r = image.registers();
    assert_eq!(
        WordOrder::HighWordFirst.join([r[ch], r[ch + 1]]) as i32,
        SCALED_NO_VALUE_I32
    );
    assert_ne!(r[header::SUMMARY] & SUMMARY_CHANNEL_BAD, 0);
}

#[test]
fn surge_events_stay_flagged_until_acknowledged() {
    let mut train = demo::train::<f32>().unwrap();
    let snap = *train.update(&demo::scan(1));
    let mut image = Image::new(WordOrder::HighWordFirst, 0);
    let base = Image::LAYOUT.surge;
    image.pack(
        &snap,
        &[surge_view(0.2, 0, false)],
        &[channel(Quality::Good)],
    );
    assert_eq!(
        image.registers()[base] & derived::SURGE_EVENT_UNACKNOWLEDGED,
        0
    );
    image.pack(
        &snap,
        &[surge_view(0.2, 2, true)],
        &[channel(Quality::Good)],
    );
    let r = image.registers();
    assert_ne!(r[base] & derived::SURGE_EVENT_UNACKNOWLEDGED, 0);
    assert_ne!(r[header::SUMMARY] & SUMMARY_EVENT_UNACKNOWLEDGED, 0);
    assert_ne!(r[header::SUMMARY] & SUMMARY_TRIP_REQUEST, 0);
    // trip_request is the second yes/no field of the surge block.
    assert_ne!(r[base] & (1 << (STATUS_FIRST_FLAG + 1)), 0);
    assert!(image.acknowledge_surge_events(0, 2));
    assert!(!image.acknowledge_surge_events(1, 2));
    image.pack(
        &snap,
        &[surge_view(0.2, 2, false)],
        &[channel(Quality::Good)],
    );
    assert_eq!(
        image.registers()[base] & derived::SURGE_EVENT_UNACKNOWLEDGED,
        0
    );
    // A reset drops the count to 0; a new event is flagged again.
    image.pack(
        &snap,
        &[surge_view(0.2, 0, false)],
        &[channel(Quality::Good)],
    );
    image.pack(
        &snap,
        &[surge_view(0.2, 1, false)],
        &[channel(Quality::Good)],
    );
    assert_ne!(
        image.registers()[base] & derived::SURGE_EVENT_UNACKNOWLEDGED,
        0
    );
}

#[test]
fn non_finite_inputs_give_bad_qualities_never_nan_registers() {
    let mut scan = demo::scan(2);
    for st in scan.stages.iter_mut() {
        st.discharge_pressure.value = crate::units::PressureAbs::from_pa(f32::NAN);
    }
    let (image, _) = packed(WordOrder::HighWordFirst, &scan);
    let regs = image.registers();
    visit_map(N, 1, 1, &mut |r| {
        if r.encoding == Encoding::F32 {
            let v = f32::from_bits(
                WordOrder::HighWordFirst.join([regs[r.address], regs[r.address + 1]]),
            );
            assert!(v.is_finite(), "{} {}", r.block, r.key);
        }
    });
    assert_eq!(regs[Image::LAYOUT.stages] & 3, quality_code::BAD);
}

#[test]
fn commands_decode_only_a_whole_guarded_block() {
    let ok = decode_command(0, &[2, 0, !2, 77], 1).unwrap();
    assert_eq!(ok.kind, CommandKind::ResetAddedMargin);
    assert_eq!((ok.target, ok.sequence), (0, 77));
    assert_eq!(
        decode_command(0, &[1, 0, !1, 5], 1).unwrap().kind,
        CommandKind::AcknowledgeSurgeEvents
    );
    assert_eq!(
        decode_command(0, &[2, 0, 2, 77], 1),
        Err(CommandError::GuardMismatch)
    );
    assert_eq!(
        decode_command(0, &[9, 0, !9, 77], 1),
        Err(CommandError::UnknownCommand)
    );
    assert_eq!(
        decode_command(0, &[2, 1, !2, 77], 1),
        Err(CommandError::NoSuchTarget)
    );
    assert_eq!(
        decode_command(1, &[2, 0, !2], 1),
        Err(CommandError::Incomplete)
    );
    assert_eq!(decode_command(0, &[2], 1), Err(CommandError::Incomplete));
    let mut image = Image::new(WordOrder::HighWordFirst, 0);
    image.record_command(ok);
    assert_eq!(image.registers()[header::COMMAND_SEQUENCE], 77);
    assert_eq!(image.registers()[header::COMMAND_CODE], 2);
}

/// CRC-32 check value for "123456789": 0xCBF43926 (the standard check
/// value of CRC-32/ISO-HDLC, as listed in R. N. Williams' "A painless guide
/// to CRC error detection algorithms" parameter model and the CRC
/// catalogue; also what Python's `zlib.crc32(b"123456789")` returns).
#[test]
fn crc32_matches_the_published_check_value() {
    assert_eq!(crc32(b"123456789"), 0xCBF4_3926);
    assert_eq!(crc32(b""), 0);
    let image = Image::new(WordOrder::HighWordFirst, 0);
    let r = image.registers();
    let map = WordOrder::HighWordFirst.join([r[header::MAP_CHECKSUM], r[header::MAP_CHECKSUM + 1]]);
    assert_ne!(map, 0);
    // A different shape has a different map checksum.
    assert_ne!(map, map::map_checksum(N, 1, 2));
}

#[test]
fn condition_codes_in_the_map_are_the_kernel_codes() {
    let mut n = 0;
    map::state_codes(&mut |block, code, name| {
        assert!(code < 16, "{block} {name}");
        n += 1;
    });
    assert_eq!(n, 11 + 5 + 7 + 8 + 15);
    // Codes within a block are distinct.
    let mut seen = std::vec::Vec::new();
    map::state_codes(&mut |block, code, _| {
        assert!(!seen.contains(&(block, code)), "{block} {code}");
        seen.push((block, code));
    });
}

use crate::stage::StageCondition;

/// The loss-ledger blocks: every map row of `ledger` / `ledger_stage` holds
/// the value and quality of the kernel's ledger after `pack_ledger`, the
/// pump's stage slot stays not in use, and the lines read back from the
/// registers add up to the measured total they carry (a consistency check:
/// the project's own types on both sides).
#[test]
fn ledger_blocks_hold_the_kernel_ledger() {
    use crate::ledger::{evaluate_ledger_into, Ledger, LedgerConfig};
    let scan = demo::scan::<f32>(3);
    let mut train = demo::train::<f32>().unwrap();
    let snap = *train.update(&scan);
    let mut ledger = Ledger::bad();
    evaluate_ledger_into(
        train.config(),
        &LedgerConfig::default(),
        &scan,
        &snap,
        Measured::bad(),
        &mut ledger,
    );
    let mut image = Image::new(WordOrder::LowWordFirst, 0);
    image.pack(
        &snap,
        &[surge_view(0.25, 0, false)],
        &[channel(Quality::Good)],
    );
    let l = Image::LAYOUT;
    // Before `pack_ledger`: present bit clear, quality not applicable.
    assert_eq!(image.registers()[l.ledger] & STATUS_PRESENT, 0);
    image.pack_ledger(&ledger);
    let regs = image.registers();
    let order = WordOrder::LowWordFirst;
    let mut want: Vec<(&str, usize, &str, Measured<f32>)> = Vec::new();
    ledger.visit_fields(&mut |f, v| {
        if let Some(m) = v.measured() {
            want.push(("ledger", 0, f.key, m));
        }
    });
    for i in 0..N {
        if let Some(st) = ledger.stage(i) {
            st.visit_fields(&mut |f, v| {
                if let Some(m) = v.measured() {
                    want.push(("ledger_stage", i + 1, f.key, m));
                }
            });
        }
    }
    let (mut checked, mut lines, mut total) = (0, 0.0_f64, 0.0_f64);
    visit_map(N, 1, 1, &mut |r| {
        if !matches!(r.block, "ledger" | "ledger_stage") {
            return;
        }
        let Some((qa, qs)) = r.quality else { return };
        let code = (regs[qa] >> qs) & 3;
        let got = f32::from_bits(order.join([regs[r.address], regs[r.address + 1]]));
        match want
            .iter()
            .find(|w| w.0 == r.block && w.1 == r.instance && w.2 == r.key)
        {
            Some(w) => {
                assert_eq!(got.to_bits(), w.3.value.to_bits(), "{} {}", r.block, r.key);
                assert_eq!(code, quality_code(w.3.quality), "{} {}", r.block, r.key);
                checked += 1;
                match r.key {
                    "ledger_measured_total_W" => total = f64::from(got),
                    "ledger_forward_mass_flow_kg_per_s" => {}
                    _ => lines += f64::from(got),
                }
            }
            None => {
                // The pump's stage slot.
                assert_eq!(r.instance, N, "{} {}", r.block, r.key);
                assert_eq!(code, quality_code::NOT_APPLICABLE);
                assert_eq!(got, 0.0);
            }
        }
    });
    assert_eq!(checked, want.len());
    assert!(total > 1e6);
    assert!((lines - total).abs() <= 1e-5 * total, "{lines} vs {total}");
    assert_ne!(regs[l.ledger] & STATUS_PRESENT, 0);
    let pump_slot = l.ledger_stages + (N - 1) * block_len(LEDGER_STAGE_SLOTS);
    assert_eq!(regs[pump_slot] & STATUS_PRESENT, 0);
}
