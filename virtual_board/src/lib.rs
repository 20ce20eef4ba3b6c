//! boardtwin's virtual board: a cycle-level model of IEEE 1149.1 devices and boards.
//!
//! # Layout
//! - `span`: places in text files, shared by every reader.
//! - `model`: description types read from files (`DeviceModel`).
//! - `bsdl`: the BSDL reader.
//! - `tap`: the TAP controller's state machine.
//! - `register`: packed bits, the storage of shift registers and scans.
//! - `cell`: the boundary-cell capture table, as data.
//! - `device`: one scan device, edge by edge.
//! - `target`: `TapTarget`, the one way a program reaches a board.
//! - `yaml`: the one YAML loading layer (duplicate keys, depth, places).

#![deny(missing_docs)]

mod board;
mod board_file;
mod bsdl;
mod cell;
mod defect;
mod device;
mod model;
mod register;
mod rng;
mod span;
mod tap;
mod target;
mod yaml;

pub use crate::{
    board::{
        reference_shift, Board, BoardEvent, BoardParts, Cluster, ClusterKind, ClusterPin,
        DriverLevel, EventGroup, EventPlace, EventView, FloatPolicy, FloatingGroup, Net, PinName,
        ShortResolve, ShortRule, Strength, TapPort, EVENTS_KEPT,
    },
    board_file::{
        bsdl_files_beside, load_board, load_board_text, BoardError, BoardErrorKind, BoardFile,
        BoardSource, BsdlSource, Bystander, DeviceEntry, LoadedBoard, PackageStyle, PortEntry,
        PullEntry, DEFAULT_BRIDGE_DISTANCE_MM,
    },
    bsdl::{parse_bsdl, parse_bsdl_package, read_bsdl, read_bsdl_text, BsdlError, BsdlErrorKind},
    cell::{capture_source, CaptureFunction, CaptureSource, InstructionClass, CAPTURE_TABLE},
    defect::{DefectError, DefectSpec},
    device::{
        Decoded, Device, DeviceError, DeviceFaults, DeviceSetup, Drive, NetRead, Pad, PinControl,
        PinView, Selected, SystemDrive,
    },
    model::device::{
        BitPattern, BoundaryCell, CellControl, CellFunction, CellType, ClockStop, DeviceModel,
        DisableResult, Instruction, PatternBit, Port, PortMode, PortRange, PortRef, RangeDir,
        RegisterAccess, RegisterKind, TapSignals,
    },
    register::Bits,
    rng::{seed_for, Rng},
    span::{LineIndex, Span},
    tap::{TapState, TmsPath},
    target::{
        check_ports, clock_moves, CellPlace, EventCounts, EventTally, HeldInstruction,
        InstructionView, PathSegment, PortId, TapPins, TapTarget, TargetError, TckLimit,
    },
    yaml::{
        clip, clip_quotes, read_tree, read_yaml, NodeKind, PathStep, YamlError, YamlErrorKind,
        YamlNode, MAX_ALIAS_NODES, MAX_DEPTH,
    },
};
