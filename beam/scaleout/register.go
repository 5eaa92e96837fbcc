package scaleout

import (
	"context"

	"github.com/apache/beam/sdks/v2/go/pkg/beam/register"

	"github.com/kinmap/kinmap/mapper"
)

// Beam finds the functions and types of a pipeline on its workers through a
// registry that must be filled before main runs; this is the only work done
// at init.
func init() {
	register.DoFn4x1[context.Context, fileRef, func(string, siteChunk), func(fileOutcome), error](&readFn{})
	register.Combiner3[[]string, fileOutcome, []string](&channelsFn{})
	register.DoFn4x0[string, func(*siteChunk) bool, []string, func(int, siteResult)](&siteFn{})
	register.DoFn3x1[context.Context, int, func(*siteResult) bool, error](&shardFn{})
	register.DoFn3x1[context.Context, int, func(*fileOutcome) bool, error](&outcomesFn{})
	register.DoFn5x1[context.Context, string, mapper.Map, func(*mapper.Accumulator), func(float64), error](&bmuFn{})
	register.Combiner1[*mapper.Accumulator](&accumulateFn{})
	register.DoFn3x1[context.Context, *mapper.Accumulator, float64, error](&epochOutFn{})
	register.DoFn3x1[context.Context, string, mapper.Map, error](&assignFn{})
	register.DoFn4x0[string, func(*siteChunk) bool, siteGroups, func(int, []float64)](&levelFn{})
	register.DoFn3x1[context.Context, int, func(*[]float64) bool, error](&levelOutFn{})
	register.Emitter2[int, []float64]()
	register.Iter1[[]float64]()
	register.Emitter2[string, siteChunk]()
	register.Emitter1[fileOutcome]()
	register.Emitter2[int, siteResult]()
	register.Emitter1[*mapper.Accumulator]()
	register.Emitter1[float64]()
	register.Iter1[siteChunk]()
	register.Iter1[siteResult]()
	register.Iter1[fileOutcome]()
}
