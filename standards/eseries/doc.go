// Package eseries provides the IEC 60063 preferred-number series E3, E6,
// E12, E24, E48, E96 and E192, the values in which resistors and capacitors
// are sold.
//
// # The series
//
// Series EN has N values per decade. They are rounded terms of the geometric
// progression 10^(i/N), i = 0…N−1, repeated in every decade by multiplying by
// a power of ten. E3 to E24 are given to two significant figures and E48 to
// E192 to three. The published values are not all the rounded progression:
// several two-figure values (2.7, 3.3, 3.9, 4.7 and 8.2 among them, plus 3.0,
// 3.6 and 4.3 in E24) are a step away from round(10^(i/N)) for historical
// reasons, and E192 has 9.20 where the formula gives 9.19. This package holds
// the published values, typed in from IEC 60063:2015 Tables 1 and 2; its
// tests recompute the progression and check that the departures from it are
// exactly the listed exceptions. E24 holds E12 as its every other value,
// E12 holds E6 and E6 holds E3; likewise E192 holds E96 and E96 holds E48.
// The three-figure series do not hold the two-figure ones (E48 has no 2.2).
//
// # Tolerance convention
//
// A series is customarily paired with the tolerance at which adjacent values'
// tolerance bands just about meet, so that any nominal value is within
// tolerance of a part in the series: E6 ±20 %, E12 ±10 %, E24 ±5 %, E48 ±2 %,
// E96 ±1 % and E192 ±0.5 % (E192 is also used for ±0.25 % and ±0.1 % parts).
// IEC 60063 says only that E3 serves tolerances wider than ±20 %; this
// package reports 40 % for it, a rounded-up value of the half-gap of about
// 37 % between adjacent E3 values. The 2015 edition treats the pairing as
// guidance rather than a rule, and so does TolerancePct.
//
// # Numbers
//
// Values are positive float64 numbers in [MinValue, MaxValue]. A series value
// m×10^k is returned as the float64 nearest to the decimal number, so 4.7e-9
// from E12 compares equal to the literal 4.7e-9. Membership tests treat a
// number within a relative 1e-9 of a series value as that value, so results of
// ordinary arithmetic are recognised: 2.2 times 1e5 is 220000.00000000003 in
// float64, and counts as 220e3. Ratios, not
// differences, measure closeness: the nearest value to x is the one that
// minimises |log(v/x)|.
package eseries
