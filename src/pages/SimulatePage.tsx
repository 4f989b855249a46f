export default function SimulatePage() { return null; }
