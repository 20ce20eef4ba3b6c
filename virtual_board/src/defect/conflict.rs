//! Defect lists that contradict themselves: a short of a net with itself,
//! one net stuck at 0 and at 1, one set of nets shorted twice, one device
//! replaced twice. Refused before anything is built, naming both defects.

use std::collections::{BTreeSet, HashMap};

use super::{DefectError, DefectSpec};

/// What one defect says about one thing, for spotting a second defect that
/// says something about the same thing.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
enum Claim {
    Stuck(String),
    TdoStuck(String),
    Short(BTreeSet<String>),
    WrongDevice(String),
}

/// Checks that no two defects of `defects` claim the same thing.
///
/// # Errors
/// The later of the two defects, naming the earlier one (numbered from 1).
pub(super) fn check_consistent(defects: &[DefectSpec]) -> Result<(), DefectError> {
    let mut seen: HashMap<Claim, usize> = HashMap::new();
    for (k, d) in defects.iter().enumerate() {
        let index = k + 1;
        let claim = if let Some(nets) = &d.short {
            let mut set = BTreeSet::new();
            if let Some(n) = nets.iter().find(|n| !set.insert(n.to_string())) {
                return Err(DefectError {
                    index,
                    message: format!(
                        "net `{n}` is listed twice in the short: a net cannot short to itself"
                    ),
                });
            }
            Claim::Short(set)
        } else if let Some(s) = &d.stuck {
            Claim::Stuck(s.clone())
        } else if let Some(s) = &d.tdo_stuck {
            Claim::TdoStuck(s.clone())
        } else if let Some(s) = &d.wrong_device {
            Claim::WrongDevice(s.clone())
        } else {
            continue;
        };
        if let Some(&first) = seen.get(&claim) {
            let other = &defects[first - 1];
            let what = if other == d {
                "repeats".to_string()
            } else {
                format!(
                    "contradicts ({} against {})",
                    d.describe(),
                    other.describe()
                )
            };
            return Err(DefectError {
                index,
                message: format!("this defect {what} defect {first}"),
            });
        }
        seen.insert(claim, index);
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn list(yaml: &str) -> Vec<DefectSpec> {
        serde_yaml::from_str(yaml).unwrap()
    }

    #[test]
    fn contradictions_name_both_defects() {
        let e = check_consistent(&list("- { short: [A, A] }")).unwrap_err();
        assert_eq!(e.index, 1);
        assert!(e.message.contains("`A` is listed twice"), "{e}");

        let e = check_consistent(&list(
            "- { stuck: A, value: 0 }\n- { open: B }\n- { stuck: A, value: 1 }",
        ))
        .unwrap_err();
        assert_eq!(e.index, 3);
        assert!(e.message.contains("contradicts"), "{e}");
        assert!(
            e.message.contains("A stuck at 1 against A stuck at 0"),
            "{e}"
        );
        assert!(e.message.ends_with("defect 1"), "{e}");

        let e = check_consistent(&list(
            "- { short: [A, B], behaviour: wired-and }\n- { short: [B, A], behaviour: wired-or }",
        ))
        .unwrap_err();
        assert_eq!(e.index, 2);
        assert!(e.message.contains("contradicts"), "{e}");

        let e = check_consistent(&list(
            "- { dead: U1 }\n- { stuck: A, value: 1 }\n- { stuck: A, value: 1 }",
        ))
        .unwrap_err();
        assert_eq!(
            (e.index, e.message.as_str()),
            (3, "this defect repeats defect 2")
        );

        // Different things are no contradiction.
        assert!(check_consistent(&list(
            "- { short: [A, B] }\n- { short: [A, C] }\n- { stuck: A, value: 0 }\n- { open: A }"
        ))
        .is_ok());
    }
}
