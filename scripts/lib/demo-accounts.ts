/** The demo workspace's sign-ins, as contract.md defines them, for the start-up banner. */
export const demoAccounts = {
  workspace: 'Harrow Lane Boostworks',
  password: 'crackpoint-demo',
  users: [
    { email: 'admin@harrowlane.example', role: 'admin' },
    { email: 'engineer@harrowlane.example', role: 'engineer' },
    { email: 'builder@harrowlane.example', role: 'builder' },
    { email: 'analyst@harrowlane.example', role: 'analyst' },
  ],
} as const
