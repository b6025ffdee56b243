/** Unit conversions used by the importer (shared/spectra/units.ts and the unit parsers). */
import { expect, test } from 'vitest'
import { parseXUnits, parseYUnits } from '#shared/spectra/import-finish.ts'
import {
	MAX_ABSORBANCE,
	absorbanceToTransmittance,
	micrometresToWavenumber,
	nanometresToWavenumber,
	transmittanceToAbsorbance,
	transmittancesToAbsorbance,
	wavenumberToMicrometres,
} from '#shared/spectra/units.ts'

test('from memory (definition): wavenumber in cm⁻¹ = 10⁴ / wavelength in µm = 10⁷ / wavelength in nm', () => {
	expect(micrometresToWavenumber(2.5)).toBe(4000)
	expect(micrometresToWavenumber(25)).toBe(400)
	expect(wavenumberToMicrometres(1000)).toBe(10)
	expect(nanometresToWavenumber(2500)).toBe(4000)
	expect(micrometresToWavenumber(0)).toBeNaN()
	expect(micrometresToWavenumber(-1)).toBeNaN()
})

test('from memory (Beer–Lambert, decadic): A = −log10 T; 10 %T is A = 1, 1 %T is A = 2, and back again', () => {
	expect(transmittanceToAbsorbance(0.1, 'fraction')).toBeCloseTo(1, 15)
	expect(transmittanceToAbsorbance(1, 'percent')).toBeCloseTo(2, 15)
	expect(transmittanceToAbsorbance(100, 'percent')).toBe(-0)
	expect(absorbanceToTransmittance(2)).toBeCloseTo(0.01, 15)
})

test('common practice, no source: transmittance at or below zero is clipped to the absorbance cap, never NaN or Infinity', () => {
	expect(transmittanceToAbsorbance(0, 'fraction')).toBe(MAX_ABSORBANCE)
	expect(transmittanceToAbsorbance(-0.19, 'percent')).toBe(MAX_ABSORBANCE)
	const conversion = transmittancesToAbsorbance(Float64Array.from([50, 0, -0.2, 10]), 'percent')
	expect(conversion.clipped).toBe(2)
	expect(conversion.lowest).toBe(-0.2)
	expect(Array.from(conversion.absorbance).every(Number.isFinite)).toBe(true)
})

test('FACTS.md §4.2 (allowed unit values, MEMORY) and common header spellings are recognised', () => {
	expect(parseXUnits('1/CM')).toBe('wavenumber')
	expect(parseXUnits('1/cm')).toBe('wavenumber')
	expect(parseXUnits('cm-1')).toBe('wavenumber')
	expect(parseXUnits('MICROMETERS')).toBe('micrometres')
	expect(parseXUnits('µm')).toBe('micrometres')
	expect(parseXUnits('NANOMETERS')).toBe('nanometres')
	expect(parseXUnits('SECONDS')).toBeNull()
	expect(parseXUnits('HZ')).toBeNull()
	expect(parseYUnits('TRANSMITTANCE')).toBe('transmittance')
	expect(parseYUnits('% TRANSMITTANCE')).toBe('transmittance-percent')
	expect(parseYUnits('%T')).toBe('transmittance-percent')
	expect(parseYUnits('ABSORBANCE')).toBe('absorbance')
	expect(parseYUnits('Reflectance')).toBe('reflectance')
	expect(parseYUnits('KUBELKA-MUNK')).toBe('other')
	expect(parseYUnits('ARBITRARY UNITS')).toBe('unknown')
})
