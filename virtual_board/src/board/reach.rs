//! `Reach`: which nets a change can touch, for resolving only those.
//!
//! After a TCK edge only the devices whose pins changed (an Update-DR or
//! Update-IR that moves their drivers, a reset) drive anything new. The
//! nets they drive are resolved again, and from each net whose level
//! changed, the nets that read it through system logic (a pad following a
//! net, a non-scan cluster's inputs). Every other net would resolve to
//! what it holds already, so the full resolution and this one agree
//! (`tests/quiet_path.rs` checks it on random boards).
//!
//! A net whose float policy is random is resolved every time: each
//! resolution draws a new level for it from the board's generator, in net
//! order, so it is never "unchanged". A board where a net depends on a net
//! resolved after it (a transceiver's loop, or an order the loader could
//! not make) takes the full resolution every time: the full pass reads the
//! later net's old level, and only repeating it exactly gives the same
//! answer.

use super::{Cluster, Net};
use crate::device::{Device, SystemDrive};
use crate::FloatPolicy;

/// The board's reach, built once with the board.
#[derive(Clone, Debug, Default)]
pub(crate) struct Reach {
    /// Per device: the nets its pads drive (sorted, once each).
    pub device_nets: Vec<Vec<u32>>,
    /// Per net: the nets whose drivers read its level.
    pub dependents: Vec<Vec<u32>>,
    /// The nets whose float policy is random: resolved every time.
    pub random_nets: Vec<u32>,
    /// Per device: true when a pad on no net follows a net (its own
    /// one-pin net then changes with that net).
    pub lone_follows: Vec<bool>,
    /// False where the full resolution must run (see the module notes).
    pub incremental: bool,
}

impl Reach {
    /// The reach of a board's nets, devices and clusters; `pad_net` gives
    /// each device's pads' nets (`None`: on no net).
    pub fn new(
        nets: &[Net],
        devices: &[Device],
        clusters: &[Cluster],
        pad_net: &[Vec<Option<u32>>],
        settle: bool,
    ) -> Reach {
        let mut device_nets = vec![Vec::new(); devices.len()];
        let mut dependents = vec![Vec::new(); nets.len()];
        for (i, net) in nets.iter().enumerate() {
            for &(d, p, _) in &net.drivers {
                device_nets[d].push(i as u32);
                if let Some(SystemDrive::Follow(n)) = devices[d].system().get(p) {
                    dependents[*n as usize].push(i as u32);
                }
            }
            for &(c, _) in &net.cluster_drivers {
                for input in &clusters[c].inputs {
                    if let Some(n) = input.net {
                        dependents[n as usize].push(i as u32);
                    }
                }
            }
        }
        for list in device_nets.iter_mut().chain(dependents.iter_mut()) {
            list.sort_unstable();
            list.dedup();
        }
        let forward = dependents
            .iter()
            .enumerate()
            .all(|(n, after)| after.iter().all(|&m| m as usize > n));
        let random_nets = (0..nets.len() as u32)
            .filter(|&n| nets[n as usize].float == FloatPolicy::Random)
            .collect();
        let lone_follows = devices
            .iter()
            .zip(pad_net)
            .map(|(d, pads)| {
                pads.iter()
                    .zip(d.system())
                    .any(|(net, s)| net.is_none() && matches!(s, SystemDrive::Follow(_)))
            })
            .collect();
        Reach {
            device_nets,
            dependents,
            random_nets,
            lone_follows,
            incremental: forward && !settle,
        }
    }
}
