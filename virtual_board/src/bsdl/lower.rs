//! From BSDL syntax to a checked `DeviceModel`.
//!
//! Every rule below is IEEE 1149.1 Annex B (BSDL) as we remember it; the
//! tests in `tests/bsdl_rules.rs` name the rule each one stands on.

use std::collections::HashMap;

use tracing::warn;

use super::error::BsdlErrorKind;
use super::lexer::{Tok, Token};
use super::parser::{AttributeDecl, PortType, Syntax, SyntaxError};
use super::strings::{Joined, Words};
use crate::model::device::{
    BitPattern, BoundaryCell, CellControl, CellFunction, CellType, ClockStop, DeviceModel,
    DisableResult, Instruction, PatternBit, Port, PortMode, PortRange, PortRef, RangeDir,
    RegisterAccess, RegisterKind, TapSignals,
};
use crate::span::{LineIndex, Span};

/// `use` packages that need no warning (IEEE 1149.1 editions).
const STANDARD_PACKAGES: [&str; 4] = [
    "STD_1149_1_1990",
    "STD_1149_1_1994",
    "STD_1149_1_2001",
    "STD_1149_1_2013",
];

/// Attributes read elsewhere or needing no model.
const KNOWN_ATTRIBUTES: [&str; 17] = [
    "COMPONENT_CONFORMANCE",
    "DESIGN_WARNING",
    "PIN_MAP",
    "TAP_SCAN_IN",
    "TAP_SCAN_OUT",
    "TAP_SCAN_MODE",
    "TAP_SCAN_CLOCK",
    "TAP_SCAN_RESET",
    "INSTRUCTION_LENGTH",
    "INSTRUCTION_OPCODE",
    "INSTRUCTION_CAPTURE",
    "INSTRUCTION_PRIVATE",
    "IDCODE_REGISTER",
    "USERCODE_REGISTER",
    "REGISTER_ACCESS",
    "BOUNDARY_LENGTH",
    "BOUNDARY_REGISTER",
];

struct Lower<'a> {
    text: &'a str,
    syntax: &'a Syntax,
    lines: &'a LineIndex,
    entity_at: (usize, usize),
    /// A package chosen by the board instead of the PHYSICAL_PIN_MAP default.
    package: Option<&'a str>,
}

/// Builds and checks the device model.
///
/// # Errors
/// The first rule the file breaks, with its byte offset and length.
pub fn lower(
    text: &str,
    syntax: &Syntax,
    lines: &LineIndex,
    package: Option<&str>,
) -> Result<DeviceModel, SyntaxError> {
    let Some((entity, eoff, elen)) = syntax.entity.clone() else {
        return Err((0, 0, BsdlErrorKind::NoEntity));
    };
    let l = Lower {
        text,
        syntax,
        lines,
        entity_at: (eoff, elen),
        package,
    };
    for (what, at) in &syntax.skipped {
        warn!(
            line = lines.span(text, *at, 0).line,
            "BSDL statement not modelled, skipped: {what}"
        );
    }
    let mut uses = Vec::new();
    for (name, at) in &syntax.uses {
        if !STANDARD_PACKAGES.contains(&name.as_str()) {
            warn!(
                line = lines.span(text, *at, 0).line,
                "BSDL package {name} is not a standard package; its cells are not known"
            );
        }
        uses.push(name.clone());
    }

    let attrs = l.entity_attributes()?;
    // Kept by name, without a log line: the commands that show a device say
    // them once per file at `-v` (a regression run reads the same files many
    // times).
    let mut unmodelled = Vec::new();
    for a in &syntax.attributes {
        if !KNOWN_ATTRIBUTES.contains(&a.name.as_str()) && !unmodelled.contains(&a.name) {
            unmodelled.push(a.name.clone());
        }
    }
    // IEEE 1149.1-2001 Annex B (from memory): DESIGN_WARNING is a string
    // from the device maker to the test engineer; kept whole, to be shown.
    let design_warning = attrs
        .get("DESIGN_WARNING")
        .map(|a| l.joined(a, "DESIGN_WARNING"))
        .transpose()?
        .map(|j| j.text().split_whitespace().collect::<Vec<_>>().join(" "));

    let (package, packages, pin_map) = l.pin_map()?;
    let ports = l.ports(&package, pin_map)?;
    let tap = l.tap(&ports)?;

    let ir_length = l.number(
        l.required(&attrs, "INSTRUCTION_LENGTH")?,
        "INSTRUCTION_LENGTH",
    )?;
    let ir_attr = l.required(&attrs, "INSTRUCTION_LENGTH")?;
    if ir_length < 2 {
        return Err((
            ir_attr.at.0,
            ir_attr.at.1,
            BsdlErrorKind::IrTooShort(ir_length),
        ));
    }
    let mut instructions = l.opcodes(l.required(&attrs, "INSTRUCTION_OPCODE")?, ir_length)?;
    if let Some(a) = attrs.get("INSTRUCTION_PRIVATE") {
        l.private(a, &mut instructions)?;
    }
    let opcode_attr = l.required(&attrs, "INSTRUCTION_OPCODE")?;
    check_bypass(&instructions, opcode_attr)?;
    // IEEE 1149.1-2001 clause 8 (from memory): BYPASS, SAMPLE (or
    // SAMPLE/PRELOAD) and EXTEST are mandatory.
    for required in ["EXTEST", "SAMPLE"] {
        if !instructions
            .iter()
            .any(|i| i.name.eq_ignore_ascii_case(required))
        {
            return Err((
                opcode_attr.at.0,
                opcode_attr.at.1,
                BsdlErrorKind::MissingInstruction(required),
            ));
        }
    }
    for (instruction, attribute) in [
        ("IDCODE", "IDCODE_REGISTER"),
        ("USERCODE", "USERCODE_REGISTER"),
    ] {
        if let Some(i) = instructions
            .iter()
            .find(|i| i.name.eq_ignore_ascii_case(instruction))
        {
            if !attrs.contains_key(attribute) {
                return Err((
                    i.span.offset as usize,
                    i.name.len(),
                    BsdlErrorKind::MissingRegister {
                        instruction: i.name.clone(),
                        attribute,
                    },
                ));
            }
        }
    }
    let ir_capture = l.capture(l.required(&attrs, "INSTRUCTION_CAPTURE")?, ir_length)?;
    let idcode = attrs
        .get("IDCODE_REGISTER")
        .map(|a| l.id_register(a, "IDCODE_REGISTER"))
        .transpose()?;
    let usercode = attrs
        .get("USERCODE_REGISTER")
        .map(|a| l.id_register(a, "USERCODE_REGISTER"))
        .transpose()?;
    let register_access = match attrs.get("REGISTER_ACCESS") {
        Some(a) => l.register_access(a, &instructions)?,
        None => Vec::new(),
    };

    let length_attr = l.required(&attrs, "BOUNDARY_LENGTH")?;
    let boundary_length = l.number(length_attr, "BOUNDARY_LENGTH")?;
    let cells = l.boundary(l.required(&attrs, "BOUNDARY_REGISTER")?, &ports)?;
    check_cells(&cells, boundary_length, length_attr, lines, text)?;
    check_tap_cells(&cells, &tap)?;

    Ok(DeviceModel {
        entity,
        source: None,
        package,
        packages,
        uses,
        ports,
        tap,
        ir_length,
        instructions,
        ir_capture,
        idcode,
        usercode,
        register_access,
        boundary_length,
        cells,
        unmodelled_attributes: unmodelled,
        design_warning,
    })
}

fn upper(s: &str) -> String {
    s.to_ascii_uppercase()
}

fn bad(at: (usize, usize), what: &'static str, found: &str) -> SyntaxError {
    (
        at.0,
        at.1,
        BsdlErrorKind::BadValue {
            what,
            found: found.to_string(),
        },
    )
}

impl<'a> Lower<'a> {
    fn span(&self, offset: usize) -> Span {
        self.lines.span(self.text, offset, 0)
    }

    /// Entity attributes we model, by name; a second one is an error.
    fn entity_attributes(&self) -> Result<HashMap<&'a str, &'a AttributeDecl>, SyntaxError> {
        let mut map: HashMap<&str, &AttributeDecl> = HashMap::new();
        for a in &self.syntax.attributes {
            if a.name.starts_with("TAP_SCAN_") {
                continue;
            }
            let entity = self
                .syntax
                .entity
                .as_ref()
                .map(|e| e.0.as_str())
                .unwrap_or("");
            if !a.target.eq_ignore_ascii_case(entity) {
                return Err((
                    a.target_at.0,
                    a.target_at.1,
                    BsdlErrorKind::WrongEntity {
                        attribute: a.name.clone(),
                        found: a.target.clone(),
                        entity: entity.to_string(),
                    },
                ));
            }
            if !KNOWN_ATTRIBUTES.contains(&a.name.as_str()) {
                continue;
            }
            if let Some(first) = map.get(a.name.as_str()) {
                return Err((
                    a.at.0,
                    a.at.1,
                    BsdlErrorKind::DuplicateAttribute {
                        name: a.name.clone(),
                        first_line: self.span(first.at.0).line,
                    },
                ));
            }
            map.insert(a.name.as_str(), a);
        }
        Ok(map)
    }

    fn required(
        &self,
        attrs: &HashMap<&'a str, &'a AttributeDecl>,
        name: &'static str,
    ) -> Result<&'a AttributeDecl, SyntaxError> {
        attrs.get(name).copied().ok_or((
            self.entity_at.0,
            self.entity_at.1,
            BsdlErrorKind::MissingAttribute(name),
        ))
    }

    fn number(&self, a: &AttributeDecl, what: &'static str) -> Result<usize, SyntaxError> {
        match a.value.as_slice() {
            [Token {
                tok: Tok::Number(n),
                ..
            }] => n
                .replace('_', "")
                .parse::<usize>()
                .map_err(|_| bad(a.at, what, n)),
            [t, ..] => Err(bad((t.offset, t.len), what, &t.describe(self.text))),
            [] => Err(bad(a.at, what, "nothing")),
        }
    }

    fn joined(&self, a: &AttributeDecl, what: &'static str) -> Result<Joined, SyntaxError> {
        Joined::from_value(self.text, &a.value, what)
    }

    /// The selected package, the names of all packages, and the selected PIN_MAP_STRING.
    fn pin_map(&self) -> Result<(String, Vec<String>, Option<Joined>), SyntaxError> {
        let maps: Vec<_> = self
            .syntax
            .constants
            .iter()
            .filter(|c| c.ty == "PIN_MAP_STRING")
            .collect();
        let packages: Vec<String> = maps.iter().map(|c| c.name.clone()).collect();
        let generic = self
            .syntax
            .generics
            .iter()
            .find(|g| g.name == "PHYSICAL_PIN_MAP");
        let chosen = self
            .package
            .map(|p| (p.to_string(), self.entity_at.0, self.entity_at.1));
        let (package, at) = match chosen.or_else(|| generic.and_then(|g| g.default.clone())) {
            Some((name, off, len)) => (name, (off, len)),
            None if maps.len() == 1 => (maps[0].name.clone(), maps[0].at),
            None if maps.is_empty() => return Ok((String::new(), packages, None)),
            None => {
                let at = generic.map(|g| g.at).unwrap_or(self.entity_at);
                return Err((
                    at.0,
                    at.1,
                    BsdlErrorKind::UnknownPackage {
                        package: "(none selected)".into(),
                        available: packages.join(", "),
                    },
                ));
            }
        };
        let Some(constant) = maps.iter().find(|c| c.name.eq_ignore_ascii_case(&package)) else {
            return Err((
                at.0,
                at.1,
                BsdlErrorKind::UnknownPackage {
                    package,
                    available: packages.join(", "),
                },
            ));
        };
        let joined = Joined::from_value(self.text, &constant.value, "PIN_MAP_STRING")?;
        Ok((constant.name.clone(), packages, Some(joined)))
    }

    fn ports(&self, package: &str, pin_map: Option<Joined>) -> Result<Vec<Port>, SyntaxError> {
        let mut ports = Vec::with_capacity(self.syntax.ports.len());
        let mut by_name: HashMap<String, usize> = HashMap::new();
        for d in &self.syntax.ports {
            let mode = match d.mode.as_str() {
                "IN" => PortMode::In,
                "OUT" => PortMode::Out,
                "INOUT" => PortMode::InOut,
                "BUFFER" => PortMode::Buffer,
                "LINKAGE" => match &d.ty {
                    PortType::Other(t) => {
                        warn!("port {} has linkage type {t}; treated as linkage", d.name);
                        PortMode::OtherLinkage(t.clone())
                    }
                    _ => PortMode::Linkage,
                },
                other => {
                    warn!("port {} has mode {other}; treated as linkage", d.name);
                    PortMode::OtherLinkage(other.to_string())
                }
            };
            let range = match d.ty {
                PortType::Vector {
                    left,
                    right,
                    downto,
                } => Some(PortRange {
                    left,
                    right,
                    dir: if downto {
                        RangeDir::Downto
                    } else {
                        RangeDir::To
                    },
                }),
                _ => None,
            };
            // A span past u32 would overflow `width()`; no device has one.
            if range
                .is_some_and(|r| r.left.abs_diff(r.right) >= u64::from(u32::MAX) || r.width() == 0)
            {
                return Err(bad(d.at, "bit_vector range", &d.name));
            }
            if by_name.insert(upper(&d.name), ports.len()).is_some() {
                return Err(bad(d.at, "port name (declared twice)", &d.name));
            }
            ports.push(Port {
                name: d.name.clone(),
                mode,
                range,
                pins: Vec::new(),
                span: self.span(d.at.0),
            });
        }

        let Some(joined) = pin_map else {
            if let Some(p) = ports.first() {
                return Err((
                    p.span.offset as usize,
                    p.name.len(),
                    BsdlErrorKind::PortWithoutPin {
                        port: p.name.clone(),
                        package: "(no PIN_MAP_STRING)".into(),
                    },
                ));
            }
            return Ok(ports);
        };
        let mut w = joined.words()?;
        while !w.done() {
            let name = w.word("a port name")?;
            let at = w.place(name);
            let Some(&index) = by_name.get(&upper(name.text)) else {
                return Err((
                    at.0,
                    at.1,
                    BsdlErrorKind::UnknownPort(name.text.to_string()),
                ));
            };
            w.expect(":", "`:`")?;
            let pins = pin_list(&mut w)?;
            let port = &mut ports[index];
            if !port.pins.is_empty() {
                return Err((
                    at.0,
                    at.1,
                    BsdlErrorKind::BadPinMap {
                        port: port.name.clone(),
                        problem: "mapped twice".into(),
                    },
                ));
            }
            port.pins = match port.range {
                Some(r) => {
                    if pins.len() != r.width() {
                        return Err((
                            at.0,
                            at.1,
                            BsdlErrorKind::BadPinMap {
                                port: port.name.clone(),
                                problem: format!(
                                    "{} pins listed for a vector of {} elements",
                                    pins.len(),
                                    r.width()
                                ),
                            },
                        ));
                    }
                    pins
                }
                None => vec![pins.into_iter().flatten().collect()],
            };
            if !w.eat(",") && !w.done() {
                return w.error("`,` between port mappings");
            }
        }
        let total: usize = ports
            .iter()
            .map(|p| p.pins.iter().map(Vec::len).sum::<usize>())
            .sum();
        let mut pin_owner: HashMap<std::borrow::Cow<'_, str>, &str> = HashMap::with_capacity(total);
        for p in &ports {
            if p.pins.is_empty() {
                return Err((
                    p.span.offset as usize,
                    p.name.len(),
                    BsdlErrorKind::PortWithoutPin {
                        port: p.name.clone(),
                        package: package.to_string(),
                    },
                ));
            }
            for pin in p.pins.iter().flatten() {
                // Pin names compare without case; most have no lower case to fold.
                let key = if pin.bytes().any(|b| b.is_ascii_lowercase()) {
                    std::borrow::Cow::Owned(upper(pin))
                } else {
                    std::borrow::Cow::Borrowed(pin.as_str())
                };
                if let Some(other) = pin_owner.insert(key, p.name.as_str()) {
                    if !matches!(p.mode, PortMode::Linkage | PortMode::OtherLinkage(_)) {
                        return Err((
                            p.span.offset as usize,
                            p.name.len(),
                            BsdlErrorKind::BadPinMap {
                                port: p.name.clone(),
                                problem: format!("pin {pin} is also bonded to port {other}"),
                            },
                        ));
                    }
                }
            }
        }
        Ok(ports)
    }

    fn tap(&self, ports: &[Port]) -> Result<TapSignals, SyntaxError> {
        let mut tap = TapSignals::default();
        for a in &self.syntax.attributes {
            let (slot, name) = match a.name.as_str() {
                "TAP_SCAN_IN" => (&mut tap.tdi, "TAP_SCAN_IN"),
                "TAP_SCAN_OUT" => (&mut tap.tdo, "TAP_SCAN_OUT"),
                "TAP_SCAN_MODE" => (&mut tap.tms, "TAP_SCAN_MODE"),
                "TAP_SCAN_CLOCK" => (&mut tap.tck, "TAP_SCAN_CLOCK"),
                "TAP_SCAN_RESET" => (&mut tap.trst, "TAP_SCAN_RESET"),
                _ => continue,
            };
            self.tap_form(a)?;
            let Some(port) = ports
                .iter()
                .find(|p| p.name.eq_ignore_ascii_case(&a.target))
            else {
                return Err((
                    a.target_at.0,
                    a.target_at.1,
                    BsdlErrorKind::UnknownPort(a.target.clone()),
                ));
            };
            if slot.is_some() {
                let first = self
                    .syntax
                    .attributes
                    .iter()
                    .find(|b| b.name == a.name)
                    .map_or(a.at.0, |b| b.at.0);
                return Err((
                    a.at.0,
                    a.at.1,
                    BsdlErrorKind::DuplicateAttribute {
                        name: a.name.clone(),
                        first_line: self.span(first).line,
                    },
                ));
            }
            *slot = Some(port.name.clone());
            tap.declared_at
                .push((name, self.lines.span(self.text, a.at.0, a.at.1)));
            if a.name == "TAP_SCAN_CLOCK" {
                // (frequency, BOTH | LOW)
                let v = &a.value;
                let freq = v.iter().find_map(|t| match &t.tok {
                    Tok::Number(n) => Some((n.clone(), t.offset, t.len)),
                    _ => None,
                });
                if let Some((n, off, len)) = freq {
                    tap.tck_max_hz = Some(
                        n.replace('_', "")
                            .parse::<f64>()
                            .map_err(|_| bad((off, len), "TCK frequency", &n))?,
                    );
                }
                tap.tck_stop = v.iter().find_map(|t| match &t.tok {
                    Tok::Ident(w) if w == "BOTH" => Some(ClockStop::Both),
                    Tok::Ident(w) if w == "LOW" => Some(ClockStop::Low),
                    _ => None,
                });
                if tap.tck_max_hz.is_none() || tap.tck_stop.is_none() {
                    let t = v.first().map(|t| (t.offset, t.len)).unwrap_or(a.at);
                    return Err(bad(
                        t,
                        "TAP_SCAN_CLOCK (expected (frequency, BOTH|LOW))",
                        "value",
                    ));
                }
            }
        }
        let missing = [
            (tap.tdi.is_none(), "TAP_SCAN_IN"),
            (tap.tdo.is_none(), "TAP_SCAN_OUT"),
            (tap.tms.is_none(), "TAP_SCAN_MODE"),
            (tap.tck.is_none(), "TAP_SCAN_CLOCK"),
        ];
        if let Some((_, name)) = missing.iter().find(|(m, _)| *m) {
            return Err((
                self.entity_at.0,
                self.entity_at.1,
                BsdlErrorKind::MissingAttribute(name),
            ));
        }
        Ok(tap)
    }

    /// IEEE 1149.1-2001 Annex B (from memory): a TAP_SCAN_* attribute is a
    /// signal attribute; TAP_SCAN_CLOCK's value is `(frequency, BOTH|LOW)`
    /// and the other four are BOOLEAN and say `true`.
    fn tap_form(&self, a: &AttributeDecl) -> Result<(), SyntaxError> {
        let clock = a.name == "TAP_SCAN_CLOCK";
        let expected = if clock {
            "(frequency, BOTH|LOW)"
        } else {
            "true"
        };
        let well_formed = match a.value.as_slice() {
            [v] => !clock && v.is_word("TRUE"),
            [open, Token {
                tok: Tok::Number(_),
                ..
            }, comma, stop, close] => {
                clock
                    && open.is_punct("(")
                    && comma.is_punct(",")
                    && (stop.is_word("BOTH") || stop.is_word("LOW"))
                    && close.is_punct(")")
            }
            _ => false,
        };
        if a.class == "SIGNAL" && well_formed {
            return Ok(());
        }
        let end = a
            .value
            .last()
            .map_or(a.class_at.0 + a.class_at.1, |t| t.offset + t.len);
        let found = self.text.get(a.class_at.0..end).unwrap_or("?");
        let found = found.split_whitespace().collect::<Vec<_>>().join(" ");
        let at = match a.value.first() {
            Some(v) if a.class == "SIGNAL" => (v.offset, v.len),
            _ => a.class_at,
        };
        Err((
            at.0,
            at.1,
            BsdlErrorKind::BadTapAttribute {
                attribute: a.name.clone(),
                expected,
                found,
            },
        ))
    }

    fn opcodes(
        &self,
        a: &AttributeDecl,
        ir_length: usize,
    ) -> Result<Vec<Instruction>, SyntaxError> {
        let joined = self.joined(a, "INSTRUCTION_OPCODE")?;
        let mut w = joined.words()?;
        let mut out: Vec<Instruction> = Vec::new();
        let mut names: std::collections::HashSet<String> = std::collections::HashSet::new();
        let mut places: Vec<Vec<(usize, usize)>> = Vec::new();
        while !w.done() {
            let name = w.word("an instruction name")?;
            let name_at = w.place(name);
            if !names.insert(name.text.to_ascii_uppercase()) {
                return Err(bad(name_at, "instruction (listed twice)", name.text));
            }
            w.expect("(", "`(` before the opcodes")?;
            let mut opcodes = Vec::new();
            let mut at = Vec::new();
            loop {
                let op = w.word("an opcode")?;
                let op_at = w.place(op);
                let pattern =
                    BitPattern::parse(op.text).ok_or_else(|| bad(op_at, "opcode", op.text))?;
                if pattern.len() != ir_length {
                    return Err((
                        op_at.0,
                        op_at.1,
                        BsdlErrorKind::OpcodeWidth {
                            instruction: name.text.to_string(),
                            opcode: op.text.to_string(),
                            width: pattern.len(),
                            ir_length,
                        },
                    ));
                }
                opcodes.push(pattern);
                at.push(op_at);
                if w.eat(")") {
                    break;
                }
                w.expect(",", "`,` or `)` in the opcode list")?;
            }
            out.push(Instruction {
                name: name.text.to_string(),
                opcodes,
                private: false,
                span: self.span(name_at.0),
            });
            places.push(at);
            w.eat(",");
        }
        if let Some((i, k, other)) = first_ambiguity(&out) {
            let at = places[i][k];
            return Err((
                at.0,
                at.1,
                BsdlErrorKind::AmbiguousOpcode {
                    instruction: out[i].name.clone(),
                    opcode: out[i].opcodes[k].to_string(),
                    other: out[other].name.clone(),
                },
            ));
        }
        Ok(out)
    }

    fn private(
        &self,
        a: &AttributeDecl,
        instructions: &mut [Instruction],
    ) -> Result<(), SyntaxError> {
        let joined = self.joined(a, "INSTRUCTION_PRIVATE")?;
        let mut w = joined.words()?;
        let index: HashMap<String, usize> = instructions
            .iter()
            .enumerate()
            .map(|(k, i)| (i.name.to_ascii_uppercase(), k))
            .collect();
        while !w.done() {
            let name = w.word("an instruction name")?;
            let Some(ins) = index
                .get(&name.text.to_ascii_uppercase())
                .and_then(|&k| instructions.get_mut(k))
            else {
                let at = w.place(name);
                return Err((
                    at.0,
                    at.1,
                    BsdlErrorKind::UnknownInstruction(name.text.to_string()),
                ));
            };
            ins.private = true;
            w.eat(",");
        }
        Ok(())
    }

    fn capture(&self, a: &AttributeDecl, ir_length: usize) -> Result<BitPattern, SyntaxError> {
        let joined = self.joined(a, "INSTRUCTION_CAPTURE")?;
        let text = joined.compact();
        let at = (joined.file_offset(0), text.len());
        let pattern =
            BitPattern::parse(&text).ok_or_else(|| bad(at, "INSTRUCTION_CAPTURE", &text))?;
        if pattern.len() != ir_length {
            return Err((
                at.0,
                at.1,
                BsdlErrorKind::BadCapture(text, "its width is not INSTRUCTION_LENGTH"),
            ));
        }
        // IEEE 1149.1 clause 7: the two least significant bits capture 01.
        if pattern.bit(0) != PatternBit::One || pattern.bit(1) != PatternBit::Zero {
            return Err((
                at.0,
                at.1,
                BsdlErrorKind::BadCapture(text, "its two least significant bits must be 01"),
            ));
        }
        Ok(pattern)
    }

    fn id_register(
        &self,
        a: &AttributeDecl,
        register: &'static str,
    ) -> Result<BitPattern, SyntaxError> {
        let joined = self.joined(a, register)?;
        let text = joined.compact();
        let at = (
            joined.file_offset(0),
            a.value
                .last()
                .map(|t| t.offset + t.len)
                .unwrap_or(0)
                .saturating_sub(joined.file_offset(0)),
        );
        let pattern = BitPattern::parse(&text).ok_or_else(|| bad(at, register, &text))?;
        if pattern.len() != 32 {
            return Err((
                at.0,
                at.1,
                BsdlErrorKind::BadIdRegister {
                    register,
                    pattern: text,
                    problem: "it must have 32 bits",
                },
            ));
        }
        // IEEE 1149.1 clause 10: IDCODE bit 0 is always 1.
        if register == "IDCODE_REGISTER" && pattern.bit(0) != PatternBit::One {
            return Err((
                at.0,
                at.1,
                BsdlErrorKind::BadIdRegister {
                    register,
                    pattern: text,
                    problem: "its least significant bit must be 1",
                },
            ));
        }
        Ok(pattern)
    }

    fn register_access(
        &self,
        a: &AttributeDecl,
        instructions: &[Instruction],
    ) -> Result<Vec<RegisterAccess>, SyntaxError> {
        let joined = self.joined(a, "REGISTER_ACCESS")?;
        let mut w = joined.words()?;
        let known: std::collections::HashSet<String> = instructions
            .iter()
            .map(|i| i.name.to_ascii_uppercase())
            .collect();
        let mut out = Vec::new();
        while !w.done() {
            let reg = w.word("a register name")?;
            let reg_at = w.place(reg);
            let length = if w.eat("[") {
                let n = w.word("a register length")?;
                let n_at = w.place(n);
                let len = n
                    .text
                    .parse::<usize>()
                    .map_err(|_| bad(n_at, "register length", n.text))?;
                w.expect("]", "`]`")?;
                Some(len)
            } else {
                None
            };
            let register = match (upper(reg.text).as_str(), length) {
                ("BOUNDARY", _) => RegisterKind::Boundary,
                ("BYPASS", _) => RegisterKind::Bypass,
                ("DEVICE_ID", _) => RegisterKind::DeviceId,
                ("USERCODE", None) => RegisterKind::Usercode,
                (_, Some(length)) if length > 0 => RegisterKind::User {
                    name: reg.text.to_string(),
                    length,
                },
                _ => {
                    return Err(bad(
                        reg_at,
                        "register (a design-specific register needs [length])",
                        reg.text,
                    ))
                }
            };
            w.expect("(", "`(` before the instructions")?;
            loop {
                let ins = w.word("an instruction name")?;
                let ins_at = w.place(ins);
                if !known.contains(&ins.text.to_ascii_uppercase()) {
                    return Err((
                        ins_at.0,
                        ins_at.1,
                        BsdlErrorKind::UnknownInstruction(ins.text.to_string()),
                    ));
                }
                let mut captures = None;
                if w.peek()
                    .is_some_and(|x| !x.punct && x.text.eq_ignore_ascii_case("CAPTURES"))
                {
                    w.bump();
                    let p = w.word("a capture pattern")?;
                    let p_at = w.place(p);
                    let pattern = BitPattern::parse(p.text)
                        .ok_or_else(|| bad(p_at, "CAPTURES pattern", p.text))?;
                    let width = match &register {
                        RegisterKind::User { length, .. } => Some(*length),
                        RegisterKind::Bypass => Some(1),
                        RegisterKind::DeviceId | RegisterKind::Usercode => Some(32),
                        RegisterKind::Boundary => None,
                    };
                    if width.is_some_and(|w| w != pattern.len()) {
                        return Err(bad(
                            p_at,
                            "CAPTURES pattern (its width is not the register's length)",
                            p.text,
                        ));
                    }
                    captures = Some(pattern);
                }
                out.push(RegisterAccess {
                    instruction: ins.text.to_string(),
                    register: register.clone(),
                    captures,
                });
                if w.eat(")") {
                    break;
                }
                w.expect(",", "`,` or `)` in the instruction list")?;
            }
            w.eat(",");
        }
        Ok(out)
    }

    fn boundary(
        &self,
        a: &AttributeDecl,
        ports: &[Port],
    ) -> Result<Vec<BoundaryCell>, SyntaxError> {
        let joined = self.joined(a, "BOUNDARY_REGISTER")?;
        let mut w = joined.words()?;
        let mut cells = Vec::new();
        while !w.done() {
            let num = w.word("a cell number")?;
            let num_at = w.place(num);
            let n = num
                .text
                .parse::<u32>()
                .map_err(|_| bad(num_at, "cell number", num.text))?;
            w.expect("(", "`(` after the cell number")?;
            let cell_w = w.word("a cell type")?;
            let cell = cell_type(cell_w.text);
            w.expect(",", "`,` after the cell type")?;
            let port = if w.eat("*") {
                None
            } else {
                let p = w.word("a port name or `*`")?;
                let p_at = w.place(p);
                let index = if w.eat("(") {
                    let i = w.word("an index")?;
                    let i_at = w.place(i);
                    let v = i
                        .text
                        .parse::<i64>()
                        .map_err(|_| bad(i_at, "port index", i.text))?;
                    w.expect(")", "`)` after the index")?;
                    Some(v)
                } else {
                    None
                };
                let Some(decl) = ports.iter().find(|x| x.name.eq_ignore_ascii_case(p.text)) else {
                    return Err((
                        p_at.0,
                        p_at.1,
                        BsdlErrorKind::UnknownPort(p.text.to_string()),
                    ));
                };
                let fits = match (decl.range, index) {
                    (None, None) => true,
                    (Some(r), Some(i)) => r.contains(i),
                    _ => false,
                };
                if !fits {
                    let shown = match index {
                        Some(i) => format!("{}({i})", p.text),
                        None => p.text.to_string(),
                    };
                    return Err((p_at.0, p_at.1, BsdlErrorKind::BadPortIndex(shown)));
                }
                Some(PortRef {
                    name: decl.name.clone(),
                    index,
                })
            };
            w.expect(",", "`,` after the port")?;
            let f = w.word("a cell function")?;
            let f_at = w.place(f);
            let function =
                cell_function(f.text).ok_or_else(|| bad(f_at, "cell function", f.text))?;
            w.expect(",", "`,` after the function")?;
            let s = w.word("a safe value (0, 1 or X)")?;
            let safe = bit_or_x(s.text).ok_or_else(|| bad(w.place(s), "safe value", s.text))?;
            let mut control = None;
            if w.eat(",") {
                let c = w.word("a control cell number")?;
                let c_at = w.place(c);
                let ccell = c
                    .text
                    .parse::<u32>()
                    .map_err(|_| bad(c_at, "control cell", c.text))?;
                w.expect(",", "`,` after the control cell")?;
                let d = w.word("a disable value (0 or 1)")?;
                let disable_value = match bit_or_x(d.text) {
                    Some(Some(v)) => v,
                    _ => return Err(bad(w.place(d), "disable value", d.text)),
                };
                w.expect(",", "`,` after the disable value")?;
                let r = w.word("a disable result (Z, WEAK0, WEAK1, PULL0, PULL1, KEEPER)")?;
                let disable_result = disable_result(r.text)
                    .ok_or_else(|| bad(w.place(r), "disable result", r.text))?;
                control = Some(CellControl {
                    cell: ccell,
                    disable_value,
                    disable_result,
                });
            }
            w.expect(")", "`)` closing the cell")?;
            if matches!(function, CellFunction::Output3 | CellFunction::Bidir) && control.is_none()
            {
                return Err((num_at.0, num_at.1, BsdlErrorKind::MissingControl(n)));
            }
            cells.push(BoundaryCell {
                num: n,
                cell,
                port,
                function,
                safe,
                control,
                span: self.span(num_at.0),
            });
            if !w.eat(",") && !w.done() {
                return w.error("`,` between cells");
            }
        }
        Ok(cells)
    }
}

/// `pin`, or `(item, item, …)` where an item is a pin or a parenthesised pin list.
fn pin_list(w: &mut Words<'_>) -> Result<Vec<Vec<String>>, SyntaxError> {
    if !w.eat("(") {
        let pin = w.word("a pin")?;
        return Ok(vec![vec![pin.text.to_string()]]);
    }
    let mut items = Vec::new();
    loop {
        if w.eat("(") {
            let mut group = Vec::new();
            loop {
                group.push(w.word("a pin")?.text.to_string());
                if w.eat(")") {
                    break;
                }
                w.expect(",", "`,` or `)` in the pin group")?;
            }
            items.push(group);
        } else {
            items.push(vec![w.word("a pin")?.text.to_string()]);
        }
        if w.eat(")") {
            return Ok(items);
        }
        w.expect(",", "`,` or `)` in the pin list")?;
    }
}

fn cell_type(text: &str) -> CellType {
    let bc = text.get(..3).is_some_and(|p| p.eq_ignore_ascii_case("BC_"));
    match text
        .get(3..)
        .filter(|_| bc)
        .and_then(|n| n.parse::<u8>().ok())
    {
        Some(n) if n <= 10 => CellType::Bc(n),
        _ => CellType::Other(upper(text)),
    }
}

fn cell_function(text: &str) -> Option<CellFunction> {
    let mut buf = [0u8; 16];
    let n = text.len();
    if n > buf.len() {
        return None;
    }
    buf[..n].copy_from_slice(text.as_bytes());
    buf[..n].make_ascii_uppercase();
    Some(match std::str::from_utf8(&buf[..n]).unwrap_or("") {
        "INPUT" => CellFunction::Input,
        "OUTPUT2" => CellFunction::Output2,
        "OUTPUT3" => CellFunction::Output3,
        "CONTROL" => CellFunction::Control,
        "CONTROLR" => CellFunction::Controlr,
        "BIDIR" => CellFunction::Bidir,
        "CLOCK" => CellFunction::Clock,
        "OBSERVE_ONLY" => CellFunction::ObserveOnly,
        "INTERNAL" => CellFunction::Internal,
        _ => return None,
    })
}

fn bit_or_x(text: &str) -> Option<Option<bool>> {
    match text {
        "0" => Some(Some(false)),
        "1" => Some(Some(true)),
        "x" | "X" => Some(None),
        _ => None,
    }
}

fn disable_result(text: &str) -> Option<DisableResult> {
    Some(match upper(text).as_str() {
        "Z" => DisableResult::Z,
        "WEAK0" => DisableResult::Weak0,
        "WEAK1" => DisableResult::Weak1,
        "PULL0" => DisableResult::Pull0,
        "PULL1" => DisableResult::Pull1,
        "KEEPER" => DisableResult::Keeper,
        _ => return None,
    })
}

/// IEEE 1149.1-2001 clause 11 (from memory): the TAP pins are not in the
/// boundary-scan register, so no cell may name a TAP signal port. The error
/// sits on the cell and names the attribute's place.
fn check_tap_cells(cells: &[BoundaryCell], tap: &TapSignals) -> Result<(), SyntaxError> {
    for c in cells {
        let Some(port) = &c.port else { continue };
        if let Some((attribute, at)) = tap.signal_of(&port.name) {
            let at = at.unwrap_or_default();
            return Err((
                c.span.offset as usize,
                c.span.len as usize,
                BsdlErrorKind::TapPortWithCell {
                    cell: c.num,
                    port: port.to_string(),
                    attribute: attribute.to_string(),
                    line: at.line,
                    column: at.column,
                },
            ));
        }
    }
    Ok(())
}

/// IEEE 1149.1 clause 8 (from memory): BYPASS exists and the all-ones opcode selects it.
/// The first opcode (instruction `i`, opcode `k`) that an earlier
/// instruction `other` also decodes: two instructions sharing a decodable
/// opcode. SAMPLE and PRELOAD may share one (IEEE 1149.1-2001 split them,
/// from memory). Opcodes without X bits are found by their text in a map,
/// so a long list of plain opcodes costs linear time; an opcode with X bits
/// is compared with every earlier one.
fn first_ambiguity(out: &[Instruction]) -> Option<(usize, usize, usize)> {
    let sample_preload = |a: &str, b: &str| {
        let pair = [upper(a), upper(b)];
        pair.contains(&"SAMPLE".to_string()) && pair.contains(&"PRELOAD".to_string())
    };
    // Earlier instructions by plain opcode text, and earlier opcodes with X.
    let mut plain: HashMap<String, Vec<usize>> = HashMap::new();
    let mut with_x: Vec<(usize, &BitPattern)> = Vec::new();
    for (i, ins) in out.iter().enumerate() {
        for (k, op) in ins.opcodes.iter().enumerate() {
            let mut others: Vec<usize> = with_x
                .iter()
                .filter(|(_, o)| o.overlaps(op))
                .map(|(j, _)| *j)
                .collect();
            if op.has_x() {
                others.extend(
                    out[..i]
                        .iter()
                        .enumerate()
                        .filter(|(_, o)| o.opcodes.iter().any(|p| p.overlaps(op)))
                        .map(|(j, _)| j),
                );
            } else if let Some(js) = plain.get(&op.to_string()) {
                others.extend(js);
            }
            if let Some(other) = others
                .into_iter()
                .filter(|&j| !sample_preload(&ins.name, &out[j].name))
                .min()
            {
                return Some((i, k, other));
            }
        }
        for op in &ins.opcodes {
            if op.has_x() {
                with_x.push((i, op));
            } else {
                let js = plain.entry(op.to_string()).or_default();
                if js.last() != Some(&i) {
                    js.push(i);
                }
            }
        }
    }
    None
}

fn check_bypass(instructions: &[Instruction], a: &AttributeDecl) -> Result<(), SyntaxError> {
    match instructions
        .iter()
        .find(|i| i.name.eq_ignore_ascii_case("BYPASS"))
    {
        None => Err((a.at.0, a.at.1, BsdlErrorKind::NoBypass)),
        Some(b) if !b.opcodes.iter().any(BitPattern::is_all_ones) => Err((
            b.span.offset as usize,
            b.name.len(),
            BsdlErrorKind::BypassNotOnes,
        )),
        Some(_) => Ok(()),
    }
}

/// Two entries with one number are one physical cell only when one observes
/// (INPUT, CLOCK, OBSERVE_ONLY) and the other drives or controls (IEEE 1149.1
/// Annex B merged cells, from memory: e.g. BC_5-style input + control, or an
/// output cell that is also read as an input).
fn mergeable(a: CellFunction, b: CellFunction) -> bool {
    use CellFunction::*;
    let observes = |f| matches!(f, Input | Clock | ObserveOnly);
    let drives = |f| matches!(f, Control | Controlr | Output2 | Output3 | Internal);
    (observes(a) && drives(b)) || (observes(b) && drives(a))
}

fn check_cells(
    cells: &[BoundaryCell],
    length: usize,
    length_attr: &AttributeDecl,
    lines: &LineIndex,
    text: &str,
) -> Result<(), SyntaxError> {
    // Each cell number's entries: one, or two for a merged cell.
    let mut seen: HashMap<u32, (&BoundaryCell, Option<&BoundaryCell>)> =
        HashMap::with_capacity(cells.len());
    let mut max: Option<u32> = None;
    for c in cells {
        max = max.max(Some(c.num));
        match seen.get_mut(&c.num) {
            Some((first, second)) => {
                if second.is_some() || !mergeable(first.function, c.function) {
                    return Err((
                        c.span.offset as usize,
                        1,
                        BsdlErrorKind::DuplicateCell {
                            cell: c.num,
                            first_line: first.span.line,
                        },
                    ));
                }
                *second = Some(c);
            }
            None => {
                seen.insert(c.num, (c, None));
            }
        }
    }
    // A count that differs from BOUNDARY_LENGTH is a length error unless the
    // numbering reaches the declared end, which makes it a gap inside.
    let reaches_end = max.is_some_and(|max| max as usize + 1 == length);
    if seen.len() == length {
        if let Some(c) = cells.iter().find(|c| c.num as usize >= length) {
            return Err((
                c.span.offset as usize,
                1,
                BsdlErrorKind::CellOutOfRange {
                    cell: c.num,
                    length,
                },
            ));
        }
    } else {
        if let Some(missing) = reaches_end
            .then(|| (0..length as u32).find(|n| !seen.contains_key(n)))
            .flatten()
        {
            // Point at the register attribute: the gap is between entries.
            let at = length_attr
                .value
                .first()
                .map(|t| t.offset)
                .unwrap_or(length_attr.at.0);
            let _ = lines.span(text, at, 0);
            return Err((at, 1, BsdlErrorKind::MissingCell(missing)));
        }
        return Err((
            length_attr.at.0,
            length_attr.at.1,
            BsdlErrorKind::BoundaryLength {
                declared: length,
                listed: seen.len(),
            },
        ));
    }
    for c in cells {
        if let Some(ctl) = c.control {
            let problem = match seen.get(&ctl.cell) {
                None => Some("does not exist"),
                Some((a, b))
                    if !a.function.is_control() && !b.is_some_and(|b| b.function.is_control()) =>
                {
                    Some("is not CONTROL or CONTROLR")
                }
                Some(_) => None,
            };
            if let Some(problem) = problem {
                return Err((
                    c.span.offset as usize,
                    1,
                    BsdlErrorKind::BadControlCell {
                        cell: c.num,
                        control: ctl.cell,
                        problem,
                    },
                ));
            }
        }
    }
    Ok(())
}
