import { computed } from 'vue'
import { useSessionStore } from '@/stores/session'
import { fieldFromDisplay, fieldToDisplay, fieldUnit, formatField, type FieldQuantity } from './field-units'

/** Converts between SI (what the model and the API speak) and the signed-in user's unit system. */
export function useUnits() {
  const session = useSessionStore()
  const system = computed(() => session.unitSystem)
  return {
    system,
    symbol: (quantity: FieldQuantity) => fieldUnit(quantity, system.value).symbol,
    toDisplay: (quantity: FieldQuantity, si: number) => fieldToDisplay(quantity, system.value, si),
    fromDisplay: (quantity: FieldQuantity, value: number) => fieldFromDisplay(quantity, system.value, value),
    format: (quantity: FieldQuantity, si: number, digits?: number) => formatField(quantity, system.value, si, digits),
  }
}
