//! Small numerical building blocks: polynomial roots, dense linear algebra, bracketed root
//! finding. All allocation-free: callers pass the storage.

pub mod linalg;
pub mod roots;
