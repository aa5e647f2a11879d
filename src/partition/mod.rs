//! Service areas: Delaunay triangulation, Voronoi cells clipped to a region, nearest-site
//! allocation.
