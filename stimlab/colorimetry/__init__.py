"""Colour maths: observers, cone spaces, the display model, device levels and gamut. No web, no storage."""
