package modelstage

import (
	"math"

	"gridstage/models"
	"gridstage/plugin"
)

// burnsideSlope differentiates the Burnside (1998) price-dividend ratio
// in every parameter the chain's sensitivities cover, by implicit
// differentiation of the pricing equation on the chain
// (models.Burnside.PriceDividendDerivative). The scalars report d v/d rho
// in the state nearest the chain's stationary mean level and, when the
// AR(1)'s mean, rho and sigma are given (ar), the closed form's derivative
// at that level and the relative difference.
func burnsideSlope(m models.Burnside, ar *[3]float64, c models.Chain, sens []plugin.Sensitivity) (plugin.Estimate, error) {
	if len(sens) == 0 {
		return plugin.Estimate{}, plugin.BadRequest("model burnside-slope needs the chain's sensitivities: an AR(1) chain of method maxent, handed by a host that speaks stage protocol minor %d", plugin.ProtocolMinor)
	}
	e := plugin.Estimate{Scalars: map[string]float64{}, Vectors: map[string][]float64{"levels": c.Levels}}
	n := c.N()
	mid := 0
	var mean float64
	for _, x := range c.Levels {
		mean += x / float64(n)
	}
	for i, x := range c.Levels {
		if math.Abs(x-mean) < math.Abs(c.Levels[mid]-mean) {
			mid = i
		}
	}
	for _, s := range sens {
		v, dv, err := m.PriceDividendDerivative(c, s.Grid, s.Transition)
		if err != nil {
			return plugin.Estimate{}, err
		}
		e.Vectors["price_dividend"] = v
		e.Vectors["d_price_dividend_d_"+s.Param] = dv
		if s.Param == "rho" {
			e.Scalars["d_price_dividend_d_rho"] = dv[mid]
			e.Scalars["price_dividend"] = v[mid]
			e.Scalars["level"] = c.Levels[mid]
		}
	}
	if _, ok := e.Scalars["d_price_dividend_d_rho"]; ok && ar != nil {
		_, want, err := m.BurnsideClosedForm(ar[0], ar[1], ar[2], c.Levels[mid])
		if err != nil {
			return plugin.Estimate{}, err
		}
		e.Scalars["closed_form_d_price_dividend_d_rho"] = want
		e.Scalars["relative_difference"] = math.Abs(e.Scalars["d_price_dividend_d_rho"]-want) / math.Abs(want)
	}
	return e, nil
}
