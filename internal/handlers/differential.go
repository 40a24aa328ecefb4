package handlers

// differentialCalcs lists /v1/differential and /v1/restraint.
func (h *Handler) differentialCalcs() []calcSpec { return nil }
