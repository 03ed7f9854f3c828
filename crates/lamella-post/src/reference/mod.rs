//! Published analytical solutions and tables that Lamella runs are validated against, and
//! (`generalised`) a numerical reference for layered channel flows that have no closed form.
//!
//! Every function is pure (numbers in, numbers out) and names its source in its doc comment.

pub mod cavity;
pub mod generalised;
pub mod layered;
pub mod startup;
pub mod taylor_green;
