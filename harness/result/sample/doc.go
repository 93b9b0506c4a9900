// Package sample builds invented but realistic result suites, for the tests
// of the report renderers, the JSON file, the shard merge and for
// demonstrations.
//
// Four scenarios cover the cases a report must show: a harbour where two
// ferries cross and the tracker passes, a quarry-road convoy (1-D) where a
// changed association is judged a tie, a coastal radar in clutter where the
// tracker departs from the reference, and a warehouse forklift where the
// tracker crashes. All numbers come from a seeded math/rand/v2 PCG source, so
// Suite returns the same value on every call and platform.
package sample
