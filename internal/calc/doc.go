// Package calc holds the physics of thermal movement: expansion of
// lengths, areas and volumes, temperature-dependent expansion curves,
// liquids in containers, differential movement, bonded layers, restrained
// members and movement joints.
//
// Every function is pure: SI values in (metres, kelvin, pascals, newtons),
// SI values out, no I/O. Each formula names its published source where it
// is implemented.
package calc
