package voxelize

import (
	"context"
	"fmt"
	"math"
	"os"
	"runtime"
	"strings"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"chimask/importers"
	"chimask/masks"
)

// m3TestGeodesic returns a geodesic sphere of radius r: each icosahedron face
// split into f^2 triangles (20 f^2 in all), vertices pushed onto the sphere
// and shared through their quantised direction.
func m3TestGeodesic(f int, r float64) *importers.Mesh {
	ico := m3TestIcosphere(0, 1, r3.Vec{})
	m := &importers.Mesh{Surfaces: []string{"sphere"}}
	ids := map[[3]int64]int32{}
	vert := func(p r3.Vec) int32 {
		p = r3.Unit(p)
		k := [3]int64{int64(math.Round(p.X * 1e9)), int64(math.Round(p.Y * 1e9)), int64(math.Round(p.Z * 1e9))}
		if i, ok := ids[k]; ok {
			return i
		}
		m.Vertices = append(m.Vertices, r3.Scale(r, p))
		ids[k] = int32(len(m.Vertices) - 1)
		return ids[k]
	}
	for _, t := range ico.Triangles {
		a, b, c := ico.Vertices[t[0]], ico.Vertices[t[1]], ico.Vertices[t[2]]
		at := func(i, j int) int32 {
			return vert(r3.Add(a, r3.Add(r3.Scale(float64(i)/float64(f), r3.Sub(b, a)), r3.Scale(float64(j)/float64(f), r3.Sub(c, a)))))
		}
		for i := range f {
			for j := 0; i+j < f; j++ {
				m.Triangles = append(m.Triangles, [3]int32{at(i, j), at(i+1, j), at(i, j+1)})
				if i+j+1 < f {
					m.Triangles = append(m.Triangles, [3]int32{at(i+1, j), at(i+1, j+1), at(i, j+1)})
				}
			}
		}
	}
	m.TriangleSurface = make([]int32, len(m.Triangles))
	return m
}

// m3PeakRSS returns the process's peak resident set (VmHWM) in bytes, or 0.
func m3PeakRSS() float64 {
	b, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if v, ok := strings.CutPrefix(line, "VmHWM:"); ok {
			var kb float64
			fmt.Sscanf(strings.TrimSpace(v), "%g", &kb)
			return kb * 1024
		}
	}
	return 0
}

// BenchmarkMeshSphere voxelizes a unit geodesic sphere with all fields on a
// cubic grid of n cells along each side (the sphere's box plus 3 cells).
// "dense" builds the whole-grid fields with Mesh; "streamed" runs MeshBlocks
// with a sink that checksums every block.
// Run the large cases once: go test -run '^$' -bench MeshSphere -benchtime=1x ./voxelize
func BenchmarkMeshSphere(b *testing.B) {
	for _, tri := range []struct {
		name string
		f    int
	}{{"100k", 71}, {"1M", 224}} {
		m := m3TestGeodesic(tri.f, 1)
		for _, n := range []int{256, 512} {
			for _, mode := range []string{"dense", "streamed"} {
				b.Run(fmt.Sprintf("tri=%s/cells=%d/%s", tri.name, n, mode), func(b *testing.B) {
					h := 2.0 / float64(n-6)
					g := masks.Grid{Dim: 3, Origin: [3]float64{-1 - 3*h, -1 - 3*h, -1 - 3*h}, Spacing: [3]float64{h, h, h}, Cells: [3]int{n, n, n}}
					runtime.GC()
					var rep *MeshReport
					cpu0 := msCPUSeconds()
					for b.Loop() {
						var err error
						if mode == "dense" {
							_, rep, err = Mesh(context.Background(), m, g, Options{})
						} else {
							// The sink reads every value (a checksum), as a writer would.
							var sum uint64
							rep, err = MeshBlocks(context.Background(), m, g, Options{}, func(_ masks.Block, fs []*masks.Field) error {
								sum += msChecksum(fs)
								return nil
							})
							if sum == 0 {
								b.Fatal("streamed checksum is zero")
							}
						}
						if err != nil {
							b.Fatal(err)
						}
					}
					b.ReportMetric(float64(g.NumCells())*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
					b.ReportMetric((msCPUSeconds()-cpu0)/float64(b.N), "cpu_s/op")
					b.ReportMetric(float64(len(m.Triangles)), "triangles")
					b.ReportMetric(m3PeakRSS()/(1<<30), "peakRSS_GiB")
					b.ReportMetric(float64(EstimateMeshMemory(g, len(m.Triangles)))/(1<<30), "estimate_GiB")
					b.ReportMetric(rep.Volume/(4.0/3*math.Pi)-1, "vol_relerr")
				})
			}
		}
	}
}
