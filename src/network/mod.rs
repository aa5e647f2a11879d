//! Networks linking sites: Euclidean minimum spanning tree and Euclidean Steiner trees.
