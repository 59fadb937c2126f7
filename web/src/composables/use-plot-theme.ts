import { computed } from 'vue'
import { useTheme } from 'vuetify'

/** Colours and type for Plotly that follow the light or dark theme. */
export function usePlotTheme() {
  const theme = useTheme()
  return computed(() => {
    const colors = theme.current.value.colors
    const pick = (name: string, fallback: string) => {
      const value = colors[name]
      return typeof value === 'string' ? value : fallback
    }
    const dark = theme.current.value.dark
    return {
      name: theme.global.name.value,
      text: pick('on-surface', '#222'),
      primary: pick('primary', '#1f4e5f'),
      secondary: pick('secondary', '#8a5a1c'),
      accent: pick('accent', '#d9822b'),
      info: pick('info', '#2a6f97'),
      error: pick('error', '#b3261e'),
      /** Extra hues for plots with many series, chosen to stay apart from the theme's own. */
      violet: dark ? '#b79be0' : '#6a4c93',
      green: pick('success', '#2e7d4f'),
      olive: dark ? '#c9b458' : '#7a6a00',
      grid: dark ? '#3a4448' : '#d5dbd8',
      zeroline: dark ? '#56636a' : '#b8c2bf',
      font: { family: 'Fira Sans, system-ui, sans-serif', size: 12 },
    }
  })
}
