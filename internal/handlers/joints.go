package handlers

// jointCalcs lists the movement-joint and design-temperature endpoints.
func (h *Handler) jointCalcs() []calcSpec { return nil }
