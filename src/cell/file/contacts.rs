//! Allowed contacts of a cell file: which body pairs may touch, when, and how deep.

use super::Scale;
use crate::error::{Error, Result};
use serde::Deserialize;
use std::path::Path;

/// How deep (m) a process contact may go when its entry gives no `depth`: 2 mm, the order
/// of a contact tip's compliance or a nozzle pressed onto the part (common practice); deeper
/// means the path runs into the part.
pub const DEFAULT_CONTACT_DEPTH_M: f64 = 0.002;

/// Largest `depth` (m) of a process contact: 100 mm is no contact but a crash, most likely a
/// unit mistake.
pub const MAX_CONTACT_DEPTH_M: f64 = 0.1;

/// When an allowed contact applies.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AllowWhen {
    /// Always: the two bodies may touch anywhere on the path.
    Always,
    /// Only at samples of `process: true` segments (a nozzle on the part while it works).
    Process,
}

/// A pair of bodies that may touch.
#[derive(Debug, Clone)]
pub struct AllowedContact {
    /// Name of the first body.
    pub a: String,
    /// Name of the second body.
    pub b: String,
    /// Where on the path the contact is allowed.
    pub when: AllowWhen,
    /// For a process contact, the deepest penetration allowed (m); deeper is a collision.
    /// Unused for `Always` (such a pair is never measured).
    pub depth: f64,
    /// Where the contact was given (`allowed_contacts[2]`), for messages.
    pub field: String,
}

#[derive(Debug, Clone, Copy, Deserialize)]
#[serde(rename_all = "snake_case")]
pub(super) enum RawWhen {
    Always,
    Process,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawContact {
    between: [String; 2],
    when: RawWhen,
    depth: Option<f64>,
}

/// Converts allowed contact `i`, checking its depth (see [`DEFAULT_CONTACT_DEPTH_M`]).
pub(super) fn contact(
    c: &RawContact,
    i: usize,
    scale: Scale,
    path: &Path,
) -> Result<AllowedContact> {
    let field = format!("allowed_contacts[{i}]");
    let when = match c.when {
        RawWhen::Always => AllowWhen::Always,
        RawWhen::Process => AllowWhen::Process,
    };
    let depth = match (when, c.depth) {
        (AllowWhen::Process, None) => DEFAULT_CONTACT_DEPTH_M,
        (AllowWhen::Process, Some(v)) => {
            let m = v * scale.m_per_length;
            if !(0.0..=MAX_CONTACT_DEPTH_M).contains(&m) {
                return Err(Error::input(
                    path,
                    format!("{field}.depth"),
                    format!(
                        "is {m} m, outside 0 .. {MAX_CONTACT_DEPTH_M} m: give how deep the contact \
                         may go in the file's length unit"
                    ),
                ));
            }
            m
        }
        (AllowWhen::Always, None) => f64::INFINITY,
        (AllowWhen::Always, Some(_)) => {
            return Err(Error::input(
                path,
                format!("{field}.depth"),
                "applies to `when: process` only (an always-allowed pair is never measured): \
                 remove depth or write when: process",
            ))
        }
    };
    Ok(AllowedContact {
        a: c.between[0].clone(),
        b: c.between[1].clone(),
        when,
        depth,
        field,
    })
}
