export default function RulebookPage() { return null; }
