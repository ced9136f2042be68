package grid

import (
	"github.com/paulmach/orb"
)

// MeshOutlines returns the outline of every element of a mesh that carries
// the data, in the file's order of nodes (location OnNodes) or faces
// (OnFaces), each a closed anticlockwise ring in lon/lat (a nil ring where
// none can be drawn):
//   - a face is its own polygon, its nodes in order;
//   - a node gets its median dual cell (common practice for node-centred
//     finite-volume meshes; e.g. Blazek, "Computational Fluid Dynamics:
//     Principles and Applications", 2001, section 5.1, from memory): around
//     the node, the midpoints of its edges joined through the centroids
//     (vertex means) of its faces, so that the dual cells of all nodes tile
//     the mesh without gaps or overlaps; a node on the mesh's boundary also
//     takes itself as a corner. A node whose faces do not form one fan
//     (a non-manifold node, or faces of inconsistent orientation after each
//     is made anticlockwise) gets nil.
//
// Faces are taken in the plane of lon/lat, as the mesh stores them (meshes
// across 180 degrees are refused by NewMesh).
func MeshOutlines(location string, nodeLon, nodeLat []float64, faceOff, faceNode []int) []orb.Ring {
	nf := len(faceOff) - 1
	at := func(a int) orb.Point { return orb.Point{nodeLon[a], nodeLat[a]} }
	// every face's nodes, anticlockwise
	faces := make([][]int, nf)
	for f := range faces {
		nodes := append([]int(nil), faceNode[faceOff[f]:faceOff[f+1]]...)
		ring := make(orb.Ring, 0, len(nodes)+1)
		for _, a := range nodes {
			ring = append(ring, at(a))
		}
		ring = append(ring, ring[0])
		if ring.Orientation() == orb.CW {
			for i, j := 0, len(nodes)-1; i < j; i, j = i+1, j-1 {
				nodes[i], nodes[j] = nodes[j], nodes[i]
			}
		}
		faces[f] = nodes
	}
	if location == OnFaces {
		out := make([]orb.Ring, nf)
		for f, nodes := range faces {
			r := make(orb.Ring, 0, len(nodes)+1)
			for _, a := range nodes {
				r = append(r, at(a))
			}
			out[f] = append(r, r[0])
		}
		return out
	}
	centroid := func(f int) orb.Point {
		var p orb.Point
		for _, a := range faces[f] {
			p[0] += nodeLon[a]
			p[1] += nodeLat[a]
		}
		k := float64(len(faces[f]))
		return orb.Point{p[0] / k, p[1] / k}
	}
	mid := func(a, b int) orb.Point {
		return orb.Point{(nodeLon[a] + nodeLon[b]) / 2, (nodeLat[a] + nodeLat[b]) / 2}
	}
	// around each node, each incident face as (next node, previous node):
	// walking anticlockwise round the node, a face is entered across the
	// edge to its next node and left across the edge to its previous one
	type wedge struct{ f, next, prev int }
	around := make([][]wedge, len(nodeLon))
	for f, nodes := range faces {
		k := len(nodes)
		for i, a := range nodes {
			around[a] = append(around[a], wedge{f, nodes[(i+1)%k], nodes[(i+k-1)%k]})
		}
	}
	out := make([]orb.Ring, len(nodeLon))
	for n, ws := range around {
		if len(ws) == 0 {
			continue
		}
		byNext := make(map[int]int, len(ws)) // next node -> wedge
		prevs := make(map[int]bool, len(ws))
		for i, w := range ws {
			if _, dup := byNext[w.next]; dup {
				byNext = nil
				break
			}
			byNext[w.next] = i
			prevs[w.prev] = true
		}
		if byNext == nil {
			continue // non-manifold: two faces enter across one edge
		}
		// a boundary node starts at the wedge whose entry edge no other
		// face leaves across; an interior node anywhere (the lowest face)
		start, boundary := 0, false
		for i, w := range ws {
			if !prevs[w.next] {
				start, boundary = i, true
				break
			}
		}
		var ring orb.Ring
		if boundary {
			ring = append(ring, at(n))
		}
		seen := 0
		i := start
		for {
			w := ws[i]
			ring = append(ring, mid(n, w.next), centroid(w.f))
			seen++
			j, ok := byNext[w.prev]
			if !ok || j == start || seen > len(ws) {
				if boundary {
					ring = append(ring, mid(n, w.prev))
				}
				break
			}
			i = j
		}
		if seen != len(ws) {
			continue // more than one fan round the node
		}
		ring = append(ring, ring[0])
		out[n] = ring
	}
	return out
}
