//! Enclosing shapes: smallest enclosing circle, weighted minimax point, minimum-volume
//! enclosing ellipse.
