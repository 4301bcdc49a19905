//! How the controller runs the path in time: speed profiles with acceleration limits
//! ([`Ramp`]), synchronised joint moves ([`SyncedMove`]) and blended corners ([`Corner`],
//! [`Window`]). Pure math, SI, allocation-free; the plan and the walk decide where to use it.

mod corner;
mod ramp;
mod sync;

pub use corner::{Corner, Window};
pub use ramp::Ramp;
pub use sync::SyncedMove;
