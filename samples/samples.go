package samples

import _ "embed"

// ReceiverDXF is the demo receiver as ASCII DXF (millimetres).
//
//go:embed receiver.dxf
var ReceiverDXF []byte

// ReceiverSVG is the demo receiver as SVG (millimetres).
//
//go:embed receiver.svg
var ReceiverSVG []byte

// ReceiverScene is the scene file that builds the DXF drawing; it refers to
// receiver.dxf in its own folder.
//
//go:embed receiver.toml
var ReceiverScene []byte

// ReceiverSVGScene builds the same receiver from the SVG drawing.
//
//go:embed receiver-svg.toml
var ReceiverSVGScene []byte
