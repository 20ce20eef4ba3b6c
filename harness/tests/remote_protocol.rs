//! The remote protocol at the byte level: the frame codec on random bytes
//! (never panics; round-trip tests of every message), and a live server fed
//! truncated, oversized, empty, malformed and random frames, clients that
//! leave mid-frame, timeouts, the admin token, shared boards and shutdown.

#[path = "support/demo.rs"]
mod demo;
#[path = "support/server.rs"]
#[allow(dead_code)]
mod server;

use std::time::Duration;

use harness::remote::{
    encode_frame, parse_frame, ErrorCode, FrameError, Reply, Request, Scope, ServerConfig,
    DEFAULT_MAX_FRAME, MAX_BURST, PROTOCOL_VERSION,
};
use proptest::prelude::*;
use virtual_board::{Bits, DefectSpec, TapPins, TapTarget};

use demo::demo;
use server::{Raw, TestServer};

fn bits(v: &[bool]) -> Bits {
    Bits::from_bools(v)
}

fn code_of(reply: Option<Reply>) -> (ErrorCode, bool) {
    match reply {
        Some(Reply::Error { code, closing, .. }) => (code, closing),
        other => panic!("expected an error reply, got {other:?}"),
    }
}

fn arb_bits(max: usize) -> impl Strategy<Value = Bits> {
    prop::collection::vec(any::<bool>(), 0..max).prop_map(|v| Bits::from_bools(&v))
}

fn arb_request() -> impl Strategy<Value = Request> {
    prop_oneof![
        (any::<u16>(), ".{0,12}").prop_map(|(version, client)| Request::Hello { version, client }),
        (
            any::<u16>(),
            prop::collection::vec((any::<bool>(), any::<bool>(), any::<bool>()), 0..200)
        )
            .prop_map(|(port, v)| Request::Burst {
                port,
                tms: bits(&v.iter().map(|x| x.0).collect::<Vec<_>>()),
                tdi: bits(&v.iter().map(|x| x.1).collect::<Vec<_>>()),
                trst_n: bits(&v.iter().map(|x| x.2).collect::<Vec<_>>()),
            }),
        (any::<u16>(), arb_bits(300)).prop_map(|(port, tdi)| Request::Shift { port, tdi }),
        (any::<u16>(), any::<bool>(), 0..=(1u64 << 32))
            .prop_map(|(port, tms, count)| Request::Idle { port, tms, count }),
        (any::<u16>(), any::<bool>()).prop_map(|(port, asserted)| Request::Trst { port, asserted }),
        Just(Request::Reset),
        Just(Request::Events),
        (any::<u16>(), any::<bool>()).prop_map(|(port, ir)| Request::Layout { port, ir }),
        any::<u16>().prop_map(|port| Request::TckLimits { port }),
        ("[a-z]{0,8}", "[A-Z_0-9]{1,8}").prop_map(|(token, net)| Request::Inject {
            token,
            scope: Scope::Server,
            defects: vec![DefectSpec {
                stuck: Some(net),
                value: Some(1),
                ..DefectSpec::default()
            }],
        }),
        "[a-z]{0,8}".prop_map(|token| Request::Clear {
            token,
            scope: Scope::Session
        }),
        "[a-z]{0,8}".prop_map(|token| Request::List {
            token,
            scope: Scope::Server
        }),
        Just(Request::Bye),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(512))]

    /// Random bytes: the codec never panics, and whatever frame it finds
    /// decodes to a request or a reply or a typed error.
    #[test]
    fn frame_codec_never_panics_on_random_bytes(bytes in prop::collection::vec(any::<u8>(), 0..64)) {
        let mut at = 0;
        while at < bytes.len() {
            match parse_frame(&bytes[at..], 48) {
                Ok((f, used)) => {
                    let _ = Request::decode(f);
                    let _ = Reply::decode(f);
                    prop_assert!(used > 4);
                    at += used;
                }
                Err(FrameError::Empty) => at += 4,
                Err(_) => break,
            }
        }
    }

    /// Round-trip test (our encoder against our decoder): any frame comes
    /// back whole, and any prefix of it is incomplete, never invalid.
    #[test]
    fn frames_round_trip(kind in any::<u8>(), body in prop::collection::vec(any::<u8>(), 0..300)) {
        let mut out = Vec::new();
        encode_frame(&mut out, kind, |b| b.extend_from_slice(&body));
        let (f, used) = parse_frame(&out, DEFAULT_MAX_FRAME).unwrap();
        prop_assert_eq!((f.kind, f.body, used), (kind, &body[..], out.len()));
        for cut in 0..out.len() {
            let incomplete = matches!(parse_frame(&out[..cut], DEFAULT_MAX_FRAME), Err(FrameError::Incomplete { .. }));
            prop_assert!(incomplete);
        }
    }

    /// Round-trip test of every request kind.
    #[test]
    fn requests_round_trip(request in arb_request()) {
        let mut out = Vec::new();
        request.encode(&mut out);
        let (f, used) = parse_frame(&out, DEFAULT_MAX_FRAME).unwrap();
        prop_assert_eq!(used, out.len());
        prop_assert_eq!(Request::decode(f).unwrap(), request);
    }

    /// A request's body cut short or lengthened is refused with a typed
    /// error, never read as something else.
    #[test]
    fn damaged_request_bodies_are_refused(request in arb_request(), extra in 1usize..4) {
        let mut out = Vec::new();
        request.encode(&mut out);
        let (f, _) = parse_frame(&out, DEFAULT_MAX_FRAME).unwrap();
        let mut longer = f.body.to_vec();
        longer.extend(std::iter::repeat_n(0u8, extra));
        let long = harness::remote::Frame { kind: f.kind, body: &longer };
        prop_assert!(Request::decode(long).is_err());
        if !f.body.is_empty() {
            let short = harness::remote::Frame { kind: f.kind, body: &f.body[..f.body.len() - 1] };
            prop_assert!(Request::decode(short).is_err());
        }
    }

    /// Round-trip test of the replies with bits.
    #[test]
    fn replies_round_trip(tdo in arb_bits(300), code in 1u16..20, closing in any::<bool>(), message in ".{0,20}") {
        let driven = Bits::from_bools(&tdo.to_bools().iter().map(|b| !b).collect::<Vec<_>>());
        for reply in [
            Reply::Burst { tdo: tdo.clone(), driven },
            Reply::Shift { tdo: tdo.clone() },
            Reply::error(ErrorCode::from_number(code), closing, message.clone()),
            Reply::Done,
        ] {
            let mut out = Vec::new();
            reply.encode(&mut out);
            let (f, _) = parse_frame(&out, DEFAULT_MAX_FRAME).unwrap();
            prop_assert_eq!(Reply::decode(f).unwrap(), reply);
        }
    }
}

#[test]
fn a_client_killed_mid_frame_leaves_the_server_serving() {
    let server = TestServer::demo(demo(), None);
    for cut in [1, 3, 4, 5, 9] {
        let mut raw = Raw::greeted(&server.address);
        let mut out = Vec::new();
        Request::Shift {
            port: 0,
            tdi: Bits::ones(64),
        }
        .encode(&mut out);
        raw.bytes(&out[..cut]);
        drop(raw); // the socket closes in the middle of the frame
    }
    let mut raw = Raw::greeted(&server.address);
    raw.send(&Request::TckLimits { port: 0 });
    assert!(matches!(raw.reply(), Some(Reply::TckLimits(l)) if l.len() == 2));
}

#[test]
fn a_frame_that_never_ends_hits_the_read_timeout() {
    let config = ServerConfig {
        read_timeout: Duration::from_millis(300),
        ..ServerConfig::default()
    };
    let server = TestServer::start(demo(), &[], false, None, config);
    let mut raw = Raw::greeted(&server.address);
    raw.bytes(&[20, 0, 0, 0, 0x03]); // 20 bytes announced, 1 sent
    assert_eq!(code_of(raw.reply()), (ErrorCode::ReadTimeout, true));
    assert!(raw.reply().is_none(), "the connection is closed");
}

#[test]
fn a_silent_connection_hits_the_idle_timeout() {
    let config = ServerConfig {
        idle_timeout: Duration::from_millis(300),
        ..ServerConfig::default()
    };
    let server = TestServer::start(demo(), &[], false, None, config);
    let mut raw = Raw::greeted(&server.address);
    assert_eq!(code_of(raw.reply()), (ErrorCode::IdleTimeout, true));
    assert!(raw.reply().is_none());
}

#[test]
fn an_oversized_frame_is_refused_and_closes_the_connection() {
    let server = TestServer::demo(demo(), None);
    let mut raw = Raw::greeted(&server.address);
    raw.bytes(&(DEFAULT_MAX_FRAME + 1).to_le_bytes());
    assert_eq!(code_of(raw.reply()), (ErrorCode::TooLarge, true));
    assert!(raw.reply().is_none());
    // A burst over the period limit is well framed: refused, the connection stays.
    let mut raw = Raw::greeted(&server.address);
    let mut out = Vec::new();
    encode_frame(&mut out, 0x02, |b| {
        b.extend_from_slice(&0u16.to_le_bytes());
        b.extend_from_slice(&(MAX_BURST + 1).to_le_bytes());
    });
    raw.bytes(&out);
    assert_eq!(code_of(raw.reply()), (ErrorCode::Malformed, false));
    raw.send(&Request::Events);
    assert!(matches!(raw.reply(), Some(Reply::Events { .. })));
}

#[test]
fn empty_malformed_and_unknown_frames_get_errors_and_the_connection_stays() {
    let server = TestServer::demo(demo(), None);
    let mut raw = Raw::greeted(&server.address);
    raw.bytes(&[0, 0, 0, 0]);
    assert_eq!(code_of(raw.reply()), (ErrorCode::EmptyFrame, false));
    raw.bytes(&[3, 0, 0, 0, 0x05, 0, 0]); // TRST* without its flag byte
    assert_eq!(code_of(raw.reply()), (ErrorCode::Malformed, false));
    raw.bytes(&[4, 0, 0, 0, 0x05, 0, 0, 7]); // a flag of 7
    assert_eq!(code_of(raw.reply()), (ErrorCode::Malformed, false));
    raw.bytes(&[1, 0, 0, 0, 0x55]);
    assert_eq!(code_of(raw.reply()), (ErrorCode::UnknownKind, false));
    raw.send(&Request::Shift {
        port: 9,
        tdi: Bits::ones(4),
    });
    let reply = raw.reply();
    assert!(
        matches!(&reply, Some(Reply::Error { code: ErrorCode::Target, closing: false, message }) if message == "there is no TAP port number 9"),
        "{reply:?}"
    );
    raw.send(&Request::Bye);
    assert_eq!(raw.reply(), Some(Reply::Bye));
    assert!(raw.reply().is_none());
}

#[test]
fn hello_comes_first_and_in_this_version() {
    let server = TestServer::demo(demo(), None);
    let mut raw = Raw::connect(&server.address);
    raw.send(&Request::Events);
    assert_eq!(code_of(raw.reply()), (ErrorCode::HelloFirst, true));
    let mut raw = Raw::connect(&server.address);
    raw.send(&Request::Hello {
        version: PROTOCOL_VERSION + 1,
        client: "future".into(),
    });
    assert_eq!(code_of(raw.reply()), (ErrorCode::Version, true));
    assert!(raw.reply().is_none());
    let mut raw = Raw::greeted(&server.address);
    raw.send(&Request::Hello {
        version: PROTOCOL_VERSION,
        client: "again".into(),
    });
    assert_eq!(code_of(raw.reply()), (ErrorCode::HelloFirst, true));
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    /// Random bytes after a hello: the server answers with errors or closes
    /// the connection, and a new client is served as before.
    #[test]
    fn random_bytes_never_bring_the_server_down(bytes in prop::collection::vec(any::<u8>(), 1..200)) {
        let server = TestServer::demo(demo(), None);
        let mut raw = Raw::greeted(&server.address);
        raw.bytes(&bytes);
        raw.stream.shutdown(std::net::Shutdown::Write).unwrap();
        while let Some(r) = raw.reply() {
            let is_reply = matches!(r, Reply::Error { .. } | Reply::Done | Reply::Events { .. } | Reply::Burst { .. } | Reply::Shift { .. } | Reply::Layout(_) | Reply::TckLimits(_) | Reply::Bye);
            prop_assert!(is_reply, "{:?}", r);
        }
        let mut again = Raw::greeted(&server.address);
        again.send(&Request::TckLimits { port: 1 });
        let three = matches!(again.reply(), Some(Reply::TckLimits(l)) if l.len() == 3);
        prop_assert!(three);
    }
}

#[test]
fn admin_requests_are_refused_without_the_token() {
    let defect = vec![DefectSpec {
        stuck: Some("LB_D0".into()),
        value: Some(0),
        ..DefectSpec::default()
    }];
    // A server started without a token refuses all three.
    let server = TestServer::demo(demo(), None);
    let mut remote =
        harness::remote::RemoteBoard::connect(&server.address, Duration::from_secs(10)).unwrap();
    for e in [
        remote
            .inject("anything", Scope::Session, &defect)
            .unwrap_err(),
        remote.clear("anything", Scope::Session).unwrap_err(),
        remote.list("anything", Scope::Server).unwrap_err(),
    ] {
        assert!(
            matches!(&e, harness::remote::RemoteError::Refused { code: ErrorCode::Refused, message, .. }
                if message.contains("started without an admin token")),
            "{e}"
        );
    }
    drop(server);
    // A server with a token refuses another one, and takes its own.
    let server = TestServer::demo(demo(), Some("s3cret"));
    let mut a =
        harness::remote::RemoteBoard::connect(&server.address, Duration::from_secs(10)).unwrap();
    let e = a.inject("s3cre", Scope::Session, &defect).unwrap_err();
    assert!(
        e.to_string()
            .contains("the admin token is not this server's"),
        "{e}"
    );
    assert_eq!(a.list("s3cret", Scope::Session).unwrap(), vec![]);
    a.inject("s3cret", Scope::Session, &defect).unwrap();
    assert_eq!(a.list("s3cret", Scope::Session).unwrap(), defect);
    // Session scope: later connections do not get it; server scope: they do.
    let mut b =
        harness::remote::RemoteBoard::connect(&server.address, Duration::from_secs(10)).unwrap();
    assert_eq!(b.list("s3cret", Scope::Session).unwrap(), vec![]);
    b.inject("s3cret", Scope::Server, &defect).unwrap();
    let mut c =
        harness::remote::RemoteBoard::connect(&server.address, Duration::from_secs(10)).unwrap();
    assert_eq!(c.list("s3cret", Scope::Session).unwrap(), defect);
    // Defects that do not fit the board are refused, naming the net.
    let bad = vec![DefectSpec {
        stuck: Some("NO_SUCH_NET".into()),
        value: Some(0),
        ..DefectSpec::default()
    }];
    let e = c.inject("s3cret", Scope::Session, &bad).unwrap_err();
    assert!(e.to_string().contains("`NO_SUCH_NET`"), "{e}");
}

/// TMS for `Test-Logic-Reset → Run-Test/Idle → Select-DR-Scan → Capture-DR
/// → Shift-DR` (IEEE 1149.1 clause 6 state diagram, from memory).
const TO_SHIFT_DR: [bool; 4] = [false, true, false, false];

/// The 32 TDO bits of a DR scan from Test-Logic-Reset, through a burst.
fn idcode_burst(remote: &mut harness::remote::RemoteBoard, port: usize) -> (u64, Bits) {
    let mut tms: Vec<bool> = vec![true; 5]; // five TMS=1 reach Test-Logic-Reset
    tms.extend(TO_SHIFT_DR);
    tms.extend(std::iter::repeat_n(false, 32));
    let n = tms.len();
    let out = remote
        .burst(
            port,
            &harness::remote::Burst {
                tms: bits(&tms),
                tdi: Bits::ones(n),
                trst_n: Bits::ones(n),
            },
        )
        .unwrap();
    let mut id = 0u64;
    for k in 0..32 {
        id |= u64::from(out.tdo.get(n - 32 + k)) << k;
    }
    (id, out.driven)
}

#[test]
fn a_burst_reads_the_idcode_as_the_standard_says() {
    let server = TestServer::demo(demo(), None);
    let mut remote =
        harness::remote::RemoteBoard::connect(&server.address, Duration::from_secs(10)).unwrap();
    let (id, driven) = idcode_burst(&mut remote, 0);
    // IEEE 1149.1 clause 12 (from memory): an IDCODE's least significant bit
    // is 1; after Test-Logic-Reset the IDCODE register is selected. TDO is
    // driven only in Shift-DR/Shift-IR (clause 6, from memory): the TDO of
    // a period is the one sampled on its rising edge, so the first driven
    // period is the one after the edge that enters Shift-DR.
    assert_eq!(id & 1, 1);
    // Fields as clause 12 lays them out (version 4 | part 16 | maker 11 |
    // 1), against the demo QM5508's BSDL IDCODE_REGISTER (invented part),
    // the device nearest TDO on J1_MAIN.
    assert_eq!(
        (id >> 28, (id >> 12) & 0xFFFF, (id >> 1) & 0x7FF),
        (0x2, 0x5508, 0x500)
    );
    let first_driven = (0..driven.len()).find(|&i| driven.get(i));
    assert_eq!(first_driven, Some(5 + TO_SHIFT_DR.len()));
}

#[test]
fn one_shared_board_is_used_in_turn_and_copies_are_isolated() {
    // Client A takes J1_MAIN to Shift-DR after a reset; client B shifts 32
    // bits from where A left it.
    let shift_from_here =
        |b: &mut harness::remote::RemoteBoard| b.shift(0, &Bits::ones(32)).unwrap().to_u64();
    let walk_to_shift = |a: &mut harness::remote::RemoteBoard| {
        for tms in [true, true, true, true, true]
            .into_iter()
            .chain(TO_SHIFT_DR)
        {
            a.clock(0, TapPins::new(tms, true)).unwrap();
        }
    };
    let shared = TestServer::start(demo(), &[], true, None, ServerConfig::default());
    let mut a =
        harness::remote::RemoteBoard::connect(&shared.address, Duration::from_secs(10)).unwrap();
    let mut b =
        harness::remote::RemoteBoard::connect(&shared.address, Duration::from_secs(10)).unwrap();
    walk_to_shift(&mut a);
    let id = shift_from_here(&mut b);
    assert_eq!(id & 1, 1, "B shifted the IDCODE A selected: {id:#x}");
    let (reference, _) = idcode_burst(&mut b, 0);
    assert_eq!(id, reference);

    let copies = TestServer::demo(demo(), None);
    let mut a =
        harness::remote::RemoteBoard::connect(&copies.address, Duration::from_secs(10)).unwrap();
    let mut b =
        harness::remote::RemoteBoard::connect(&copies.address, Duration::from_secs(10)).unwrap();
    walk_to_shift(&mut a);
    // B's own board is still in Test-Logic-Reset: TDO is high-impedance,
    // which a shift reads as ones.
    assert_eq!(shift_from_here(&mut b), 0xFFFF_FFFF);
}

#[test]
fn shutdown_finishes_the_request_in_flight() {
    let server = TestServer::demo(demo(), None);
    let mut raw = Raw::greeted(&server.address);
    let n = MAX_BURST as usize;
    raw.send(&Request::Burst {
        port: 1,
        tms: Bits::zeros(n),
        tdi: Bits::ones(n),
        trst_n: Bits::ones(n),
    });
    std::thread::sleep(Duration::from_millis(100));
    let stopper = std::thread::spawn(move || server.stop());
    assert!(matches!(raw.reply(), Some(Reply::Burst { tdo, .. }) if tdo.len() == n));
    assert_eq!(code_of(raw.reply()), (ErrorCode::ShuttingDown, true));
    assert!(raw.reply().is_none());
    stopper.join().unwrap();
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    /// The server's burst equals the
    /// reference: one `clock` per period on an in-process copy of the board,
    /// TDO, high-impedance and hazards alike.
    #[test]
    fn remote_bursts_equal_the_reference(
        port in 0usize..2,
        periods in prop::collection::vec(prop::collection::vec((any::<bool>(), any::<bool>(), prop::bool::weighted(0.97)), 1..150), 1..4),
    ) {
        let server = TestServer::demo(demo(), None);
        let mut remote = harness::remote::RemoteBoard::connect(&server.address, Duration::from_secs(10)).unwrap();
        let mut board = demo().board.clone();
        let bursts: Vec<harness::remote::Burst> = periods
            .iter()
            .map(|p| harness::remote::Burst {
                tms: bits(&p.iter().map(|x| x.0).collect::<Vec<_>>()),
                tdi: bits(&p.iter().map(|x| x.1).collect::<Vec<_>>()),
                trst_n: bits(&p.iter().map(|x| x.2).collect::<Vec<_>>()),
            })
            .collect();
        // One burst at a time: a random TDI may load an instruction the
        // model refuses, and then both sides must refuse it in the same words.
        for (p, b) in periods.iter().zip(&bursts) {
            let mut want = Vec::new();
            let mut refused = None;
            for &(tms, tdi, trst_n) in p {
                match board.clock(port, TapPins { tms, tdi, trst_n }) {
                    Ok(t) => want.push(t),
                    Err(e) => {
                        refused = Some(e.to_string());
                        break;
                    }
                }
            }
            match (remote.burst(port, b), refused) {
                (Ok(out), None) => {
                    for (i, w) in want.iter().enumerate() {
                        prop_assert_eq!(out.driven.get(i).then(|| out.tdo.get(i)), *w);
                        prop_assert_eq!(w.is_none(), out.tdo.get(i) && !out.driven.get(i));
                    }
                }
                (Err(harness::remote::RemoteError::Refused { message, .. }), Some(e)) => {
                    prop_assert_eq!(message, e);
                    return Ok(());
                }
                (got, e) => prop_assert!(false, "remote {:?}, reference {:?}", got, e),
            }
        }
        prop_assert_eq!(remote.take_events(), board.take_events());
    }
}

#[test]
fn pipelined_bursts_equal_one_burst_at_a_time() {
    let server = TestServer::demo(demo(), None);
    let mut a =
        harness::remote::RemoteBoard::connect(&server.address, Duration::from_secs(10)).unwrap();
    let mut b =
        harness::remote::RemoteBoard::connect(&server.address, Duration::from_secs(10)).unwrap();
    // Reset, then 40 bursts that walk Shift-DR and back through Update-DR
    // with varied TDI: BYPASS/IDCODE paths only, no instruction loads.
    let bursts: Vec<harness::remote::Burst> = (0..40u64)
        .map(|k| {
            let mut tms = vec![true; 5];
            tms.extend(TO_SHIFT_DR);
            tms.extend((0..50).map(|i| i == 49));
            tms.extend([true, false]); // Update-DR, Run-Test/Idle
            let n = tms.len();
            harness::remote::Burst {
                tms: bits(&tms),
                tdi: Bits::from_u64(k.wrapping_mul(0x9E37_79B9_7F4A_7C15), n),
                trst_n: Bits::ones(n),
            }
        })
        .collect();
    let piped = a.bursts(1, &bursts, 8).unwrap();
    let single: Vec<_> = bursts.iter().map(|x| b.burst(1, x).unwrap()).collect();
    assert_eq!(piped, single);
}
