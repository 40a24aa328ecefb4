package handlers

// batchRoutes lists POST /v1/batch/{calculation}.
func (h *Handler) batchRoutes() []route { return nil }
