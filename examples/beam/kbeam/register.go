package kbeam

import (
	"context"
	"reflect"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/register"
)

// The SDK runs DoFns on workers by name: every DoFn, combiner, function,
// emitter, iterator and coded type is registered here, before main.
func init() {
	beam.RegisterCoder(reflect.TypeFor[Block](), encodeBlock, decodeBlock)
	beam.RegisterCoder(reflect.TypeFor[State](), encodeState, decodeState)
	beam.RegisterCoder(reflect.TypeFor[leaf](), encodeLeaf, decodeLeaf)
	beam.RegisterCoder(reflect.TypeFor[partialTree](), encodePartialTree, decodePartialTree)
	beam.RegisterCoder(reflect.TypeFor[sum](), encodeSum, decodeSum)
	beam.RegisterCoder(reflect.TypeFor[seedState](), encodeSeedState, decodeSeedState)
	beam.RegisterCoder(reflect.TypeFor[partLeaf](), encodePartLeaf, decodePartLeaf)
	beam.RegisterCoder(reflect.TypeFor[partTree](), encodePartTree, decodePartTree)
	beam.RegisterCoder(reflect.TypeFor[partSum](), encodePartSum, decodePartSum)
	beam.RegisterType(reflect.TypeFor[csvFile]())
	beam.RegisterType(reflect.TypeFor[labelled]())

	register.DoFn3x1[Block, func(*State) bool, func(leaf), error](&assignFn{})
	register.Combiner3[partialTree, leaf, sum](&statsFn{})
	register.DoFn3x1[State, func(*sum) bool, func(State), error](&advanceFn{})
	register.DoFn3x1[Block, func(*seedState) bool, func(partLeaf), error](&seedAddFn{})
	register.Combiner3[partTree, partLeaf, partSum](&partsFn{})
	register.DoFn3x1[seedState, func(*partSum) bool, func(seedState), error](&seedNextFn{})
	register.DoFn2x1[seedState, func(State), error](&seedCentersFn{})
	register.DoFn3x1[context.Context, csvFile, func(Block), error](&readCSVFn{})
	register.DoFn3x1[Block, func(*State) bool, func(labelled), error](&labelFn{})
	register.DoFn3x1[context.Context, int, func(*labelled) bool, error](&writeLabelsFn{})
	register.DoFn2x1[context.Context, State, error](&writeStateFn{})
	register.DoFn2x1[context.Context, seedState, error](&writeSeedFn{})
	register.Function1x2(decodeState)
	register.Function1x2(decodeSeedState)

	register.Emitter1[leaf]()
	register.Emitter1[State]()
	register.Emitter1[partLeaf]()
	register.Emitter1[seedState]()
	register.Emitter1[Block]()
	register.Emitter1[labelled]()
	register.Iter1[State]()
	register.Iter1[sum]()
	register.Iter1[seedState]()
	register.Iter1[partSum]()
	register.Iter1[labelled]()
}
