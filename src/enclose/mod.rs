//! Enclosing shapes: the worst-case view of a set of demand points.
//!
//! - [`circle`]: the smallest enclosing circle — Welzl's move-to-front algorithm (1991).
//! - [`minimax`]: the weighted minimax point (weighted Euclidean 1-center) — exact
//!   pivoting over bases of at most three points (Elzinga and Hearn 1972).
//! - [`ellipse`]: the minimum-area enclosing ellipse — Khachiyan's algorithm with the
//!   Todd–Yildirim (2007) away steps and the Kumar–Yildirim (2005) start, on the hull.

pub mod circle;
pub mod ellipse;
pub mod minimax;

pub use circle::{enclosing_circle, enclosing_circle_with, enclosing_circles, Circle, CircleOptions};
pub use ellipse::{enclosing_ellipse, enclosing_ellipses, Ellipse};
pub use minimax::{minimax_point, minimax_points, MinimaxPoint};
