package components

import (
	"strconv"

	"capbank/components/figures"
)

// BankPrice is the headline's total price of the recommended bank: the
// bill of quantities' total with the design's currency, and a note of what
// it holds. Without a bill of quantities it is the cells' price.
func BankPrice(p ResultsProps) (price, note string) {
	c, cur := p.Recommended, p.Report.Currency
	b := p.BOQ
	if b == nil {
		return figures.Price(c.TotalPrice, cur), "cells only"
	}
	unpriced := 0
	for _, l := range b.Lines {
		if l.ExtendedPrice == nil {
			unpriced++
		}
	}
	switch {
	case unpriced == len(b.Lines):
		return figures.None, "no line of the bill of quantities has a price"
	case unpriced > 0:
		return figures.Price(&b.Total, cur), "bill of quantities, incomplete: " + strconv.Itoa(unpriced) + " " +
			map[bool]string{true: "line has", false: "lines have"}[unpriced == 1] + " no price"
	}
	return figures.Price(&b.Total, cur), "bill of quantities, every line"
}

func first(a, _ string) string  { return a }
func second(_, b string) string { return b }
