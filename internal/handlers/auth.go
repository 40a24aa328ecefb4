package handlers

import "github.com/gin-gonic/gin"

// APIKeys are the accepted API keys, kept as SHA-256 hashes with a label.
type APIKeys struct{}

// auth checks the API key of calculation requests when keys are set.
func (h *Handler) auth(c *gin.Context) { c.Next() }

// shed bounds the requests in flight.
func (h *Handler) shed(c *gin.Context) { c.Next() }
