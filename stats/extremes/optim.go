package extremes

// objective is a function to minimise with its analytic gradient: it returns
// f(x) and, when grad is non-nil, writes the gradient into it (it may leave
// grad untouched where f is not finite).
type objective func(x, grad []float64) float64
