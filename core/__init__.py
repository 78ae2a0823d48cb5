"""glowtemp: temperature of incandescent glow from a photo, with an honest band."""
