//! Published analytical solutions and tables that Lamella runs are validated against.
//!
//! Every function is pure (numbers in, numbers out) and names its source in its doc comment.

pub mod cavity;
pub mod layered;
pub mod startup;
pub mod taylor_green;
