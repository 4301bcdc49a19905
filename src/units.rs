//! Units a file may be written in (a path file, a cell file, the command-line overrides) and
//! the conversion of a number between them and SI. Shared by every reader and by the writer
//! of amended files, so that no input module depends on another for its units.

use std::fmt;

/// Length unit of a path file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum LengthUnit {
    /// Millimetre, the default: robot programs and part drawings are usually dimensioned in mm.
    #[serde(rename = "mm")]
    Mm,
    /// Metre, the unit of URDF files.
    #[serde(rename = "m")]
    M,
}

/// Angle unit of a path file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum AngleUnit {
    /// Degree, the default: what teach pendants and drawings show.
    #[serde(rename = "deg")]
    Deg,
    /// Radian, the unit of URDF files.
    #[serde(rename = "rad")]
    Rad,
}

impl LengthUnit {
    /// The accepted spellings, for messages.
    pub const ALLOWED: &'static str = "mm or m";

    /// Parses `mm` or `m`; the error message lists the allowed spellings.
    pub fn parse(s: &str) -> Result<Self, String> {
        match s.trim() {
            "mm" => Ok(LengthUnit::Mm),
            "m" => Ok(LengthUnit::M),
            other => Err(format!(
                "unknown length unit `{other}`: use {}",
                Self::ALLOWED
            )),
        }
    }

    /// Metres per unit.
    pub fn to_m(self) -> f64 {
        match self {
            LengthUnit::Mm => 1e-3,
            LengthUnit::M => 1.0,
        }
    }

    /// The spelling used in files.
    pub fn name(self) -> &'static str {
        match self {
            LengthUnit::Mm => "mm",
            LengthUnit::M => "m",
        }
    }
}

impl AngleUnit {
    /// The accepted spellings, for messages.
    pub const ALLOWED: &'static str = "deg or rad";

    /// Parses `deg` or `rad`; the error message lists the allowed spellings.
    pub fn parse(s: &str) -> Result<Self, String> {
        match s.trim() {
            "deg" => Ok(AngleUnit::Deg),
            "rad" => Ok(AngleUnit::Rad),
            other => Err(format!(
                "unknown angle unit `{other}`: use {}",
                Self::ALLOWED
            )),
        }
    }

    /// Radians per unit.
    pub fn to_rad(self) -> f64 {
        match self {
            AngleUnit::Deg => std::f64::consts::PI / 180.0,
            AngleUnit::Rad => 1.0,
        }
    }

    /// The spelling used in files.
    pub fn name(self) -> &'static str {
        match self {
            AngleUnit::Deg => "deg",
            AngleUnit::Rad => "rad",
        }
    }
}

/// The units a file (or the command-line overrides) is written in. Default: mm and deg.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct Units {
    /// Unit of lengths (and, per second, of TCP speeds).
    pub length: LengthUnit,
    /// Unit of angles (and, per second, of angular speeds).
    pub angle: AngleUnit,
}

impl Default for Units {
    fn default() -> Self {
        Units {
            length: LengthUnit::Mm,
            angle: AngleUnit::Deg,
        }
    }
}

impl fmt::Display for Units {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}, {}", self.length.name(), self.angle.name())
    }
}

impl Units {
    /// Metres per length unit.
    pub fn length_to_m(&self) -> f64 {
        self.length.to_m()
    }

    /// Radians per angle unit.
    pub fn angle_to_rad(&self) -> f64 {
        self.angle.to_rad()
    }

    /// A length (in this unit) in metres.
    pub fn length(&self, v: f64) -> f64 {
        v * self.length_to_m()
    }

    /// An angle (in this unit) in radians.
    pub fn angle(&self, v: f64) -> f64 {
        v * self.angle_to_rad()
    }

    /// Name of the speed unit, e.g. `mm/s`, for messages.
    pub fn speed_name(&self) -> String {
        format!("{}/s", self.length.name())
    }

    /// Name of the angular speed unit, e.g. `deg/s`, for messages.
    pub fn angular_speed_name(&self) -> String {
        format!("{}/s", self.angle.name())
    }
}

/// How many neighbouring doubles on each side of `si / unit` [`file_value`] tries: the
/// quotient is within one rounding of the exact one and the reader's product adds one more,
/// so a value that reads back exactly lies within a few units in the last place.
const FILE_VALUE_NEIGHBOURS: u32 = 4;

/// The number to write for SI value `si` in a unit of `si_per_unit` SI per unit (the reader
/// multiplies it back). Among the doubles next to `si / si_per_unit`, the shortest written
/// one that the reader turns back into exactly `si`; when none does (the product cannot hit
/// every double), the plain quotient, which reads back within a rounding or two.
pub fn file_value(si: f64, si_per_unit: f64) -> f64 {
    if si_per_unit == 1.0 || !si.is_finite() {
        return si;
    }
    let q = si / si_per_unit;
    let mut best: Option<(usize, f64)> = None;
    let mut consider = |v: f64| {
        if v.is_finite() && v * si_per_unit == si {
            let len = v.to_string().len();
            if best.is_none_or(|(l, _)| len < l) {
                best = Some((len, v));
            }
        }
    };
    consider(q);
    let (mut up, mut down) = (q, q);
    for _ in 0..FILE_VALUE_NEIGHBOURS {
        up = up.next_up();
        down = down.next_down();
        consider(up);
        consider(down);
    }
    best.map_or(q, |(_, v)| v)
}
