import { computed } from 'vue'
import { useTheme } from 'vuetify'
import { THEME_NAMES } from '@/plugins/theme-names'

const KEY = 'crackpoint.theme'

/** The theme stored on this device, applied at start-up. */
export function storedThemeName(): string {
  return localStorage.getItem(KEY) === 'dark' ? THEME_NAMES.dark : THEME_NAMES.light
}

/** Light or dark, remembered on this device. */
export function useThemeChoice() {
  const theme = useTheme()
  const isDark = computed(() => theme.global.name.value === THEME_NAMES.dark)
  function toggle(): void {
    const dark = !isDark.value
    theme.change(dark ? THEME_NAMES.dark : THEME_NAMES.light)
    localStorage.setItem(KEY, dark ? 'dark' : 'light')
  }
  return { isDark, toggle }
}
