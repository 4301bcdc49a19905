//! Arm configurations: the three binary choices that tell the closed-form solutions apart.
//!
//! All three are defined geometrically on the arm itself, so that a label means the same pose
//! family whatever the URDF's joint zeros and axis senses are. Words used below:
//!
//! - *axis 1 up*: axis 1 in the sense that points from joint 1's frame origin toward the
//!   shoulder (axis 2); on a floor-mounted arm this is up.
//! - *arm plane*: the plane through the wrist centre perpendicular to axes 2 and 3; the
//!   shoulder point (axis 2), the elbow point (axis 3) and the wrist centre all lie in it.
//! - *outward*: the horizontal direction in the arm plane (perpendicular to axis 1) that points
//!   from axis 1 toward the wrist centre.
//!
//! ## Shoulder: front | back
//! **front**: the wrist centre lies on the side of axis 1 toward which the shoulder offset
//! (from axis 1 to axis 2, length a1) points, so the arm reaches out over its shoulder.
//! **back**: the wrist centre lies on the other side; the arm has turned its shoulder away
//! from the target by half a turn of axis 1 and reaches back over its base. When a1 = 0 the
//! side is taken from the URDF zero pose (the side the wrist centre is on there is front).
//! The two meet when the wrist centre is on axis 1 (lateral offset b = 0) or at distance |b|
//! from it.
//!
//! ## Elbow: up | down
//! Seen in the arm plane with *outward* to the right and *axis 1 up* pointing up, the elbow
//! point lies to the left of the directed line from the shoulder point to the wrist centre
//! (**up**: above the line for a level reach) or to its right (**down**). The two meet when
//! the elbow is stretched or folded (elbow point on that line).
//!
//! ## Wrist: noflip | flip
//! With axis 4 directed from the elbow toward the wrist centre, axis 6 directed from the wrist
//! centre toward the flange and axis 5 in the URDF's positive sense of joint 5, the wrist is
//! **noflip** when `(axis4 × axis6) · axis5 > 0`, i.e. the wrist bends in the positive sense
//! of joint 5 (θ5 > 0 counted from the straight wrist), and **flip** when it is negative. The
//! two solutions of one arm posture differ by half a turn of joint 4, the opposite sign of
//! θ5 and half a turn of joint 6. They meet when axes 4 and 6 are aligned (θ5 = 0, the wrist
//! singularity).

use std::fmt;
use std::str::FromStr;

/// Which side of axis 1 the wrist centre is on (see the module documentation).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Shoulder {
    /// Reaching out over the shoulder offset (`front`).
    Front,
    /// Turned half a turn of axis 1 away, reaching back over the base (`back`).
    Back,
}

/// Which side of the shoulder–wrist line the elbow is on (see the module documentation).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Elbow {
    /// Elbow left of (above, for a level reach) the shoulder–wrist line (`up`).
    Up,
    /// Elbow right of (below, for a level reach) the shoulder–wrist line (`down`).
    Down,
}

/// Sense of the wrist bend about axis 5 (see the module documentation).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Wrist {
    /// `(axis4 × axis6) · axis5 > 0`: bent in the positive sense of joint 5 (`noflip`).
    #[serde(rename = "noflip")]
    NoFlip,
    /// Bent in the negative sense of joint 5 (`flip`).
    Flip,
}

/// One arm configuration: the three binary choices. `Display` prints `front/up/noflip`;
/// `FromStr` reads the same form back.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
pub struct Config {
    /// Side of axis 1 the wrist centre is on.
    pub shoulder: Shoulder,
    /// Side of the shoulder–wrist line the elbow is on.
    pub elbow: Elbow,
    /// Sense of the wrist bend.
    pub wrist: Wrist,
}

impl Config {
    /// All eight configurations in index order (see [`Config::index`]).
    pub const ALL: [Config; 8] = [
        Config::new(Shoulder::Front, Elbow::Up, Wrist::NoFlip),
        Config::new(Shoulder::Front, Elbow::Up, Wrist::Flip),
        Config::new(Shoulder::Front, Elbow::Down, Wrist::NoFlip),
        Config::new(Shoulder::Front, Elbow::Down, Wrist::Flip),
        Config::new(Shoulder::Back, Elbow::Up, Wrist::NoFlip),
        Config::new(Shoulder::Back, Elbow::Up, Wrist::Flip),
        Config::new(Shoulder::Back, Elbow::Down, Wrist::NoFlip),
        Config::new(Shoulder::Back, Elbow::Down, Wrist::Flip),
    ];

    /// The configuration with these three choices.
    pub const fn new(shoulder: Shoulder, elbow: Elbow, wrist: Wrist) -> Self {
        Config {
            shoulder,
            elbow,
            wrist,
        }
    }

    /// Position in [`Config::ALL`]: 4·back + 2·down + flip.
    pub fn index(self) -> usize {
        4 * (self.shoulder == Shoulder::Back) as usize
            + 2 * (self.elbow == Elbow::Down) as usize
            + (self.wrist == Wrist::Flip) as usize
    }
}

impl fmt::Display for Shoulder {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Shoulder::Front => "front",
            Shoulder::Back => "back",
        })
    }
}

impl fmt::Display for Elbow {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Elbow::Up => "up",
            Elbow::Down => "down",
        })
    }
}

impl fmt::Display for Wrist {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Wrist::NoFlip => "noflip",
            Wrist::Flip => "flip",
        })
    }
}

impl fmt::Display for Config {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}/{}/{}", self.shoulder, self.elbow, self.wrist)
    }
}

impl FromStr for Config {
    type Err = String;

    /// Reads `shoulder/elbow/wrist`, e.g. `front/up/noflip` (case-insensitive, blanks around
    /// the parts ignored). The error names the part that is wrong and the accepted words.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let parts: Vec<String> = s
            .split('/')
            .map(|p| p.trim().to_ascii_lowercase())
            .collect();
        if parts.len() != 3 {
            return Err(format!(
                "configuration '{s}' needs three parts shoulder/elbow/wrist, e.g. front/up/noflip"
            ));
        }
        let shoulder = match parts[0].as_str() {
            "front" => Shoulder::Front,
            "back" => Shoulder::Back,
            other => return Err(format!("shoulder '{other}': use front or back")),
        };
        let elbow = match parts[1].as_str() {
            "up" => Elbow::Up,
            "down" => Elbow::Down,
            other => return Err(format!("elbow '{other}': use up or down")),
        };
        let wrist = match parts[2].as_str() {
            "noflip" => Wrist::NoFlip,
            "flip" => Wrist::Flip,
            other => return Err(format!("wrist '{other}': use noflip or flip")),
        };
        Ok(Config::new(shoulder, elbow, wrist))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_round_trip_and_index_matches_order() {
        // source: common practice (trade labels front/back, up/down, flip/noflip)
        for (i, c) in Config::ALL.iter().enumerate() {
            assert_eq!(c.index(), i);
            assert_eq!(c.to_string().parse::<Config>().unwrap(), *c);
        }
        assert_eq!(Config::ALL[0].to_string(), "front/up/noflip");
        assert_eq!(Config::ALL[7].to_string(), "back/down/flip");
        assert!("front/up".parse::<Config>().is_err());
        assert!("front/sideways/flip"
            .parse::<Config>()
            .unwrap_err()
            .contains("elbow"));
    }
}
