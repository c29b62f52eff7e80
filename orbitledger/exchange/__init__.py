"""Exchange with other flight-dynamics tools: TLE/SGP4, CCSDS OPM and OEM, CSV."""
