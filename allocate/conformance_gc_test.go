package allocate_test

import (
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/allocate/allocatetest"
)

// The strategies that group by general commutation run the conformance
// suite too; their plans hold entangled settings.

func TestConformanceSortedGC(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.SortedGC{} }, nil)
}

func TestConformanceSortedGCTwoNorm(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.SortedGC{Share: allocate.ShareTwoNorm} }, nil)
}

func TestConformanceColorGC(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.ColorGC{} }, nil)
}

func TestConformanceGreedyGC(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.GreedyGC{} }, nil)
}
