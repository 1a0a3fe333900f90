// Units as printed (app/utils/format.ts, formatUnit): a power typed after a unit's letter is set as a superscript,
// as SI units are written (BIPM SI Brochure, 9th ed., §5.4.6, from memory); every other digit stays as typed.
import { describe, expect, it } from 'vitest'
import { formatNumber, formatUnit } from '../../app/utils/format'

describe('units as printed', () => {
  it('sets the powers of the demo templates\' units as superscripts', () => {
    expect(formatUnit('m2')).toBe('m²')
    expect(formatUnit('(m3/s)/%')).toBe('(m³/s)/%')
    expect(formatUnit('kg/m3')).toBe('kg/m³')
    expect(formatUnit('mm2/s')).toBe('mm²/s')
  })
  it('reads a power written with a caret, negative or bracketed, the same way', () => {
    expect(formatUnit('m^3/h')).toBe('m³/h')
    expect(formatUnit('s^-1')).toBe('s⁻¹')
    expect(formatUnit('m^(2)')).toBe('m²')
    expect(formatUnit('(m/s)2')).toBe('(m/s)²')
  })
  it('leaves numbers that are no power alone, and units without one as typed', () => {
    for (const unit of ['4-20 mA', '1/s', '%/%', 'bar/%', '%·s/%', 'rad/s', 'L/min', 'V1.5', 'h2o']) expect(formatUnit(unit)).toBe(unit)
  })
  it('is the unit of a formatted figure too', () => {
    expect(formatNumber(85, { unit: 'm2' })).toBe('85\u00a0m²')
    expect(formatNumber(0.012, { unit: '(m3/s)/%' })).toBe('0.012\u00a0(m³/s)/%')
    expect(formatNumber(45, { unit: '°' })).toBe('45°')
  })
})
