import { computed } from 'vue'
import { formatQuantity, fromDisplay, toDisplay, unitSymbol, type Quantity } from '@crackpoint/sim-core'
import { useSessionStore } from '@/stores/session'

/** Converts between SI (what the model and the API speak) and the signed-in user's unit system. */
export function useUnits() {
  const session = useSessionStore()
  const system = computed(() => session.unitSystem)
  return {
    system,
    symbol: (quantity: Quantity) => unitSymbol(quantity, system.value),
    toDisplay: (quantity: Quantity, si: number) => toDisplay(quantity, system.value, si),
    fromDisplay: (quantity: Quantity, value: number) => fromDisplay(quantity, system.value, value),
    format: (quantity: Quantity, si: number, digits?: number) => formatQuantity(quantity, system.value, si, digits),
  }
}
